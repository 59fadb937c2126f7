import { describe, expect, it } from 'vitest'
import {
  defaultScenario,
  evaluateDynamicPoint,
  pullMetrics,
  runPull,
  type PullRecord,
  type Scenario,
} from '../../src/index.ts'
import { co2Supply, psi, scenarioWith } from './pull-helpers.ts'

const base = defaultScenario()

describe('outcomes and bad configuration', () => {
  it('returns running out of steps as an outcome with statistics and a partial series', () => {
    const r = runPull(scenarioWith({ solver: { maxSteps: 100 } }))
    expect(r.stats.outcome).toBe('max-steps')
    expect(r.stats.reachedS).toBeLessThan(base.engine.pullDurationS)
    expect(r.stats.steps + r.stats.rejected).toBeLessThanOrEqual(100)
    expect(r.series.timeS.at(-1)!).toBeLessThanOrEqual(r.stats.reachedS + 1e-12)
    expect(r.metrics.settledBoostPa).toBeNull()
    expect(r.flags.notSettled).toBe(true)
    expect(evaluateDynamicPoint(scenarioWith({ solver: { maxSteps: 100 } }))).toMatchObject({ status: 'failed', outcome: 'max-steps' })
  })

  it('throws for configuration that cannot be run, naming the field or option', () => {
    // The schema refuses a top chamber smaller than the piston sweeps (test/scenario.test.ts); one put together in code
    // still gets a named error.
    const tooSmall: Scenario = { ...base, wastegate: { ...base.wastegate, topChamberVolumeM3: 20e-6 } }
    expect(() => runPull(tooSmall)).toThrow(/wastegate\.topChamberVolumeM3/)
    // The schema refuses a cut-out below the cut-in (test/scenario.test.ts); put together in code, the pull names it.
    const onTank = scenarioWith({ control: { kind: 'both' }, supply: { kind: 'compressor', regulatorSetpointPa: psi(10) } })
    if (onTank.supply.kind !== 'compressor') throw new Error('a compressor supply expected')
    const cutOut: Scenario = { ...onTank, supply: { ...onTank.supply, cutInPa: 900_000, cutOutPa: 800_000 } }
    expect(() => runPull(cutOut)).toThrow(/supply\.cutOutPa/)
    // The schema refuses a fill this dense (test/scenario.test.ts); a scenario put together in code still gets a named error.
    const onCo2 = scenarioWith({ control: { kind: 'both' }, supply: co2Supply(10) })
    if (onCo2.supply.kind !== 'co2') throw new Error('a CO₂ supply expected')
    const overfilled: Scenario = { ...onCo2, supply: { ...onCo2.supply, fillMassKg: 20 } }
    expect(() => runPull(overfilled)).toThrow(/supply\.fillMassKg/)
    expect(() => runPull(base, { relativeTolerance: 0 })).toThrow(/options\.relativeTolerance/)
    expect(() => runPull(base, { integrator: { kind: 'euler' } as never })).toThrow(/options\.integrator\.kind/)
    expect(() => runPull(base, { chambers: 'sometimes' as never })).toThrow(/options\.chambers/)
  })
})

describe('flags from whole pulls', () => {
  it('flags boost over the limit', () => {
    const r = runPull({ ...base, boostLimitPa: psi(4) })
    expect(r.flags.overBoostLimit).toBe(true)
    expect(runPull(base).flags.overBoostLimit).toBe(false)
  })

  it('flags a spring boost never beats, and a sweep point says so', () => {
    const stiff: Scenario = { ...base, springs: [{ from: 'seat', seatForceN: 2000, rateNPerM: 3500 }], exhaust: { ...base.exhaust, ratio: 0.5 } }
    const r = runPull(stiff)
    expect(r.flags.neverOpened).toBe(true)
    expect(r.metrics.crackBoostPa).toBeNull()
    expect(r.metrics.settledBoostPa).toBeNull()
    expect(evaluateDynamicPoint(stiff)).toMatchObject({ status: 'never-opens', crackBoostPa: null, settledBoostPa: null })
  })

  it('flags a valve that drive pressure pushes open short of the boost asked for (a small turbine)', () => {
    const r = runPull(scenarioWith({ control: { kind: 'none' }, exhaust: { ...base.exhaust, mode: 'turbine', turbineAreaM2: 3e-4 } }))
    expect(r.flags.heldOpenByDrive).toBe(true)
    expect(runPull(base).flags.heldOpenByDrive).toBe(false)
  })

  it('reports a valve already open when the pull starts', () => {
    const point = evaluateDynamicPoint(scenarioWith({ exhaust: { ...base.exhaust, mode: 'turbine', turbineAreaM2: 2e-4 } }))
    expect(point.status).toBe('open-at-zero-boost')
  })

  it('gives a sweep the compact numbers of a pull', () => {
    const point = evaluateDynamicPoint(base)
    const pull = runPull(base)
    expect(point.status).toBe('ok')
    expect(point.settledBoostPa).toBe(pull.metrics.settledBoostPa)
    expect(point.crackBoostPa).toBe(pull.metrics.crackBoostPa)
    expect(point.flags).toEqual(pull.flags)
    expect(JSON.parse(JSON.stringify(point))).toEqual(point)
  })
})

describe('flags from a recorded pull', () => {
  /** A flat recorded pull: boost rises to 5 psi, the valve opens at 1 s, and `edit` changes one column. */
  function record(edit: (r: PullRecord) => void): PullRecord {
    const n = 401
    const t = Array.from({ length: n }, (_, i) => i * 0.01)
    const boost = t.map((x) => psi(Math.min(5, 5 * x)))
    const r: PullRecord = {
      series: {
        timeS: t,
        rpm: t.map((x) => 3000 + 1000 * x),
        boostPa: boost,
        drivePa: boost.map((b) => 1.5 * b),
        liftM: t.map((x) => (x > 1 ? 0.003 : 0)),
        shaftSpeedRadS: t.map(() => 9000),
        topPa: t.map(() => 0),
        bottomPa: boost,
        supplyPa: boost,
        regulatedPa: boost,
        duty: t.map(() => 0),
      },
      zeroFlowMargin: t.map(() => 0.2),
      downstreamPa: t.map(() => 0),
      targetBoostPa: t.map(() => 0),
      atFullLift: t.map(() => false),
      crack: { timeS: 1, boostPa: psi(5) },
      openAtStart: false,
      gasUsedKg: null,
      compressorOnS: null,
      durationS: 4,
    }
    edit(r)
    return r
  }
  const flagsOf = (r: PullRecord) => pullMetrics(base, r, { pullsPerSupply: null, keepsUp: false, holdPa: null }).flags

  it('flags the compressor at its zero-flow line only while there is boost', () => {
    expect(flagsOf(record(() => undefined)).pastZeroFlowLine).toBe(false)
    expect(flagsOf(record((r) => (r.zeroFlowMargin[300] = -0.01))).pastZeroFlowLine).toBe(true)
    expect(flagsOf(record((r) => (r.zeroFlowMargin[0] = -0.01))).pastZeroFlowLine).toBe(false)
  })

  it('flags scatter in the settling window', () => {
    expect(flagsOf(record(() => undefined)).notSettled).toBe(false)
    const ringing = record((r) => {
      r.series.boostPa = r.series.boostPa.map((b, i) => (i > 250 ? b + psi(0.2) * Math.sin(i) : b))
    })
    expect(flagsOf(ringing).notSettled).toBe(true)
  })

  it('calls a swing of more than 1 psi through two or more cycles a hunt, and measures its frequency', () => {
    const metricsOf = (r: PullRecord) => pullMetrics(base, r, { pullsPerSupply: null, keepsUp: false, holdPa: null })
    // A sine of 1.5 psi peak to peak at 4 Hz over the settling window (from 1.2 s, the 0.2 s delay after the crack).
    const hunting = metricsOf(
      record((r) => {
        r.series.boostPa = r.series.boostPa.map((b, i) => b + psi(0.75) * Math.sin(2 * Math.PI * 4 * r.series.timeS[i]!))
      }),
    )
    expect(hunting.flags.hunting).toBe(true)
    // Peak to peak about the fitted trend: a part cycle at the window's end tilts the trend a little (within 10 %).
    expect(Math.abs(hunting.metrics.boostSwingPa! / psi(1.5) - 1)).toBeLessThan(0.1)
    // Two crossings a cycle over a window of 2.8 s: the count is whole cycles, so within one cycle over the window.
    expect(Math.abs(hunting.metrics.huntingHz! - 4)).toBeLessThan(1 / 2.8)
    // The same swing as one overshoot dying away (a single decaying bump) is no hunt.
    const bump = metricsOf(
      record((r) => {
        r.series.boostPa = r.series.boostPa.map((b, i) => b + psi(1.5) * Math.exp(-(((r.series.timeS[i]! - 1.2) / 0.1) ** 2)))
      }),
    )
    expect(bump.flags.hunting).toBe(false)
    // A small ripple that never reaches 1 psi is no hunt either.
    const ripple = metricsOf(
      record((r) => {
        r.series.boostPa = r.series.boostPa.map((b, i) => b + psi(0.3) * Math.sin(2 * Math.PI * 4 * r.series.timeS[i]!))
      }),
    )
    expect(ripple.flags.hunting).toBe(false)
    expect(ripple.metrics.huntingHz).toBeNull()
  })

  it('measures creep over a stretch at full lift', () => {
    const creeping = record((r) => {
      r.atFullLift = r.atFullLift.map((_, i) => i >= 200)
      r.series.boostPa = r.series.boostPa.map((b, i) => (i >= 200 ? b + psi(0.5) * ((i - 200) / 200) : b))
    })
    const m = pullMetrics(base, creeping, { pullsPerSupply: null, keepsUp: false, holdPa: null }).metrics
    expect(m.creepPa).toBeCloseTo(psi(0.5), 6)
    expect(pullMetrics(base, record(() => undefined), { pullsPerSupply: null, keepsUp: false, holdPa: null }).metrics.creepPa).toBeNull()
  })
})

describe('notes a tuner reads (MODEL.md §4b)', () => {
  const noteOf = (r: { notes: string[] }, start: string) => r.notes.find((n) => n.startsWith(start))

  it('says nothing beyond the cautions for the default scenario', () => {
    const r = runPull(base)
    for (const start of ['Port lag', 'Boost peaked', 'The boost target', 'Boost hunts', 'Creep']) expect(noteOf(r, start)).toBeUndefined()
    expect(r.flags).toMatchObject({ portLag: false, targetUnreachable: false, hunting: false })
  })

  it('names port lag when chambers that trail their ports crack the gate late, and the overshoot that follows', () => {
    // A 20 psi CO₂ top chamber for a 12 psi target: it must vent through the solenoid before the gate can crack.
    const r = runPull(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12) }, supply: co2Supply(20) }))
    expect(noteOf(r, 'Port lag')).toMatch(/above the static crack/)
    expect(r.flags.portLag).toBe(true)
    expect(noteOf(r, 'Boost peaked')).toMatch(/over the 12\.0 psi \(83 kPa\) target/)
  })

  it('says when a closed loop’s target lies below what the gate holds at either duty limit', () => {
    const r = runPull(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(5) } }))
    expect(noteOf(r, 'The boost target')).toMatch(/below the .* the gate holds at either duty limit/)
    expect(r.flags.targetUnreachable).toBe(true)
    // An unreachable target is the note; the overshoot past it is not a second one.
    expect(noteOf(r, 'Boost peaked')).toBeUndefined()
  })

  it('names creep when boost keeps rising with the gate on its full-lift stop', () => {
    const small: Scenario = { ...base, wastegate: { ...base.wastegate, valveDiameterM: 0.02, maxLiftM: 0.004 } }
    const r = runPull(small)
    expect(r.metrics.creepPa!).toBeGreaterThan(psi(0.5))
    expect(noteOf(r, 'Creep')).toMatch(/full-lift stop/)
  })
})

