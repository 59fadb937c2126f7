import { describe, expect, it } from 'vitest'
import { defaultScenario, fitParametersOf, fitPullToLog, POOR_FIT_RELATIVE_RESIDUAL, toSI, units } from '../../src/index.ts'
import { expectClose } from '../expect-close.ts'
import { scenarioWith } from '../pull/pull-helpers.ts'
import { syntheticLog, syntheticLogWithDrive } from './synthetic-log.ts'

// About 0.1 psi (1 σ), the scatter of a boost sensor read by a logger (common practice, no source).
const NOISE_PA = toSI(units.psi, 0.1)

// Each fit runs tens of pulls: on a loaded machine that can pass vitest's 5 s default, which is no failure of the fit.
describe('fitPullToLog', { timeout: 60_000 }, () => {
  it('recovers a known ratio and seat force within 2 % from a noisy log synthesised by the model', () => {
    const base = defaultScenario() // starts the search at ratio 1.5 and 129 N
    const truth = { ratio: 1.8, seatForceN: 160 }
    const report = fitPullToLog(base, syntheticLog(base, truth, NOISE_PA, 7))
    expectClose(report.ratio, truth.ratio, 0.02 * truth.ratio, 'ratio')
    expectClose(report.seatForceN, truth.seatForceN, 0.02 * truth.seatForceN, 'seat force')
    expect(report.converged).toBe(true)
    // What is left is the noise: the RMS residual of a right fit is close to the noise's σ.
    expectClose(report.rmsResidualPa, NOISE_PA, 0.2 * NOISE_PA, 'RMS residual')
    expect(report.rmsResidualPa).toBeLessThan(report.initialRmsResidualPa)
    expect(report.poorFit).toBe(false)
    expect(report.evaluations).toBeLessThanOrEqual(150)
    expect(report.pointsCompared).toBe(81)
    expect(report.fitted.boostPa).toHaveLength(81)
    expect(report.initial).toEqual({ ratio: 1.5, seatForceN: 129 })
  })

  it('recovers a lower ratio and a softer spring from another seed, on nested springs', () => {
    const base = scenarioWith({
      springs: [
        { from: 'seat', seatForceN: 80, rateNPerM: 2000 },
        { from: 'bench', benchCrackPressurePa: toSI(units.psi, 3), rateNPerM: 1500 },
      ],
    })
    const truth = { ratio: 1.3, seatForceN: 110 }
    const report = fitPullToLog(base, syntheticLog(base, truth, NOISE_PA, 42))
    expectClose(report.ratio, truth.ratio, 0.02 * truth.ratio, 'ratio')
    expectClose(report.seatForceN, truth.seatForceN, 0.02 * truth.seatForceN, 'seat force')
    expect(report.converged).toBe(true)
  })

  it('fits a logged drive pressure alongside boost: the ratio within 1 % where boost noise alone blurs it', () => {
    const base = defaultScenario()
    const truth = { ratio: 1.7, seatForceN: 150 }
    // A noisy boost sensor (0.5 psi) and a back-pressure sensor of 0.2 psi (common practice, no source).
    const log = syntheticLogWithDrive(base, truth, 5 * NOISE_PA, toSI(units.psi, 0.2), 11)
    const withDrive = fitPullToLog(base, log)
    expectClose(withDrive.ratio, truth.ratio, 0.01 * truth.ratio, 'ratio with drive')
    expectClose(withDrive.seatForceN, truth.seatForceN, 0.03 * truth.seatForceN, 'seat force with drive')
    // What is left of drive is its sensor's noise.
    expectClose(withDrive.driveRmsResidualPa!, toSI(units.psi, 0.2), 0.25 * toSI(units.psi, 0.2), 'drive RMS residual')
    expect(withDrive.notes.join(' ')).toContain('drive pressure was fitted alongside boost')
    const boostOnly = fitPullToLog(base, { timeS: log.timeS, boostPa: log.boostPa })
    expect(boostOnly.driveRmsResidualPa).toBeNull()
    expect(Math.abs(withDrive.ratio - truth.ratio)).toBeLessThanOrEqual(Math.abs(boostOnly.ratio - truth.ratio) + 1e-3)
    expect(() => fitPullToLog(base, { ...log, drivePa: log.drivePa!.slice(1) })).toThrow(/measured\.drivePa must have one value per time/)
  })

  it('finds the exact pair from a log without noise', () => {
    const base = defaultScenario()
    const truth = { ratio: 2.1, seatForceN: 200 }
    const report = fitPullToLog(base, syntheticLog(base, truth, 0, 1))
    expectClose(report.ratio, truth.ratio, 1e-3 * truth.ratio, 'ratio')
    expectClose(report.seatForceN, truth.seatForceN, 1e-3 * truth.seatForceN, 'seat force')
    expect(report.rmsResidualPa).toBeLessThan(50)
  })

  it('answers a flat log the model cannot explain with a large residual and a poor-fit flag, not a fake fit', () => {
    const base = defaultScenario()
    const flat = { timeS: Array.from({ length: 80 }, (_, i) => i * 0.05), boostPa: Array.from({ length: 80 }, () => toSI(units.psi, 5)) }
    const report = fitPullToLog(base, flat)
    // A pull spools from zero boost, so no pair can hold 5 psi from the first instant.
    expect(report.rmsResidualPa).toBeGreaterThan(toSI(units.psi, 1))
    expect(report.relativeResidual).toBeGreaterThan(POOR_FIT_RELATIVE_RESIDUAL)
    expect(report.poorFit).toBe(true)
    expect(report.notes.join(' ')).toContain('does not explain this log')
    expect(report.evaluations).toBeLessThanOrEqual(150)
  })

  it('compares only the points inside the pull and says how many it left out', () => {
    const base = defaultScenario()
    const log = syntheticLog(base, fitParametersOf(base), 0, 3)
    const longer = { timeS: [...log.timeS, 4.5, 5], boostPa: [...log.boostPa, 30_000, 30_000] }
    const report = fitPullToLog(base, longer, { maxIterations: 2 })
    expect(report.pointsOutside).toBe(2)
    expect(report.pointsCompared).toBe(log.timeS.length)
    expect(report.notes.join(' ')).toContain('2 measured points lie outside the pull')
  })

  it('keeps to its bounds and reports a value on one', () => {
    const base = defaultScenario()
    const report = fitPullToLog(base, syntheticLog(base, { ratio: 1.8, seatForceN: 160 }, 0, 5), { ratioBounds: [1, 1.6] })
    expect(report.ratio).toBeLessThanOrEqual(1.6)
    expect(report.atBound.ratio).toBe(true)
    expect(report.notes.join(' ')).toContain('edge of its range')
  })

  it('stops at its pull budget and says it did not converge', () => {
    const base = defaultScenario()
    const report = fitPullToLog(base, syntheticLog(base, { ratio: 1.8, seatForceN: 160 }, NOISE_PA, 9), { maxEvaluations: 5 })
    expect(report.evaluations).toBeLessThanOrEqual(5)
    expect(report.stop).toBe('max-evaluations')
    expect(report.converged).toBe(false)
  })

  it('does not change the scenario it is given', () => {
    const base = defaultScenario()
    const before = JSON.stringify(base)
    fitPullToLog(base, syntheticLog(base, { ratio: 1.7, seatForceN: 140 }, 0, 2), { maxIterations: 2 })
    expect(JSON.stringify(base)).toBe(before)
  })

  it.each([
    [{ ratioBounds: [2, 1] }, 'options.ratioBounds'],
    [{ ratioBounds: [0.2, 2] }, 'options.ratioBounds'],
    [{ seatForceBoundsN: [-1, 100] }, 'options.seatForceBoundsN'],
    [{ maxIterations: 0 }, 'options.maxIterations'],
    [{ maxEvaluations: 2.5 }, 'options.maxEvaluations'],
    [{ stepTolerance: 0 }, 'options.stepTolerance'],
  ])('refuses bad options %j naming %s', (options, name) => {
    const base = defaultScenario()
    const log = { timeS: [0, 1, 2, 3, 4], boostPa: [0, 1, 2, 3, 4] }
    expect(() => fitPullToLog(base, log, options as never)).toThrow(name)
  })

  it.each([
    [{ timeS: [0, 1, 2], boostPa: [0, 1] }, 'measured.boostPa'],
    [{ timeS: [0, 2, 1, 3, 4], boostPa: [0, 0, 0, 0, 0] }, 'measured.timeS[2]'],
    [{ timeS: [0, 1, 2, 3, 4], boostPa: [0, 0, Number.NaN, 0, 0] }, 'measured.boostPa[2]'],
    [{ timeS: [10, 11, 12, 13, 14, 15], boostPa: [0, 0, 0, 0, 0, 0] }, 'engine.pullDurationS'],
  ])('refuses a measured series that cannot be fitted (%j) naming %s', (measured, name) => {
    expect(() => fitPullToLog(defaultScenario(), measured)).toThrow(name)
  })
})
