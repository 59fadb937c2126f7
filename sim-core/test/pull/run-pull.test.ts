import { describe, expect, it } from 'vitest'
import { boostAtLift, computeBalance, defaultScenario, runPull, springTotals, wastegateAreas } from '../../src/index.ts'
import { expectClose } from '../expect-close.ts'
import { allFinite, co2Supply, psi, scenarioWith, toPsi } from './pull-helpers.ts'

const s = defaultScenario()
const pull = runPull(s)
const maxDiff = (a: number[], b: number[]) => Math.max(...a.map((v, i) => Math.abs(v - b[i]!)))

describe('the default pull', () => {
  it('converges and samples the whole pull on the 10 ms grid, with no NaN', () => {
    expect(pull.stats.outcome).toBe('converged')
    expect(pull.stats.reachedS).toBe(s.engine.pullDurationS)
    expect(pull.series.timeS).toHaveLength(401)
    pull.series.timeS.forEach((t, i) => expectClose(t, i * 0.01, 1e-12, `sample ${i}`))
    expect(allFinite(pull.series as unknown as Record<string, number[]>)).toBe(true)
    expect(pull.series.rpm[0]).toBe(s.engine.rpmStart)
    expect(pull.series.rpm[400]).toBe(s.engine.rpmEnd)
  })

  it('has no step collapse: close to the 400 steps the 10 ms maximum allows, few rejections', () => {
    expect(pull.stats.steps).toBeGreaterThanOrEqual(400)
    expect(pull.stats.steps).toBeLessThan(600)
    expect(pull.stats.rejected).toBeLessThan(0.05 * pull.stats.steps)
    expect(pull.stats.smallestStepS).toBeGreaterThan(1e-4)
    // The wrapper counts what odex's own count leaves out (its dense-output calls): more than one per step.
    expect(pull.stats.evaluations).toBeGreaterThan(5 * pull.stats.steps)
  })

  it('spools in one to two seconds, cracks, and settles', () => {
    const m = pull.metrics
    expect(m.crackTimeS).toBeGreaterThan(1)
    expect(m.crackTimeS).toBeLessThan(2)
    expect(pull.flags.neverOpened).toBe(false)
    expect(pull.flags.notSettled).toBe(false)
    expect(m.settledBoostPa).not.toBeNull()
    expect(m.maxLiftFraction).toBeGreaterThan(0.1)
    expect(m.maxLiftFraction).toBeLessThan(1)
  })

  it('settles on the static balance at its settled lift within 0.01 psi (MODEL.md §7)', () => {
    const m = pull.metrics
    const b = boostAtLift(s, m.settledLiftM!)
    expect(b.status).toBe('opens')
    if (b.status !== 'opens') return
    expectClose(m.staticBoostAtSettledLiftPa!, b.boostPa, 1e-9, 'metric is boostAtLift')
    expectClose(toPsi(m.settledBoostPa!), toPsi(b.boostPa), 0.01, 'settled boost, psi')
  })

  it('cracks within 0.5 psi of the static crack boost (MODEL.md §7)', () => {
    const crack = computeBalance(s).crack
    expect(crack.status).toBe('opens')
    if (crack.status !== 'opens') return
    expectClose(toPsi(pull.metrics.crackBoostPa!), toPsi(crack.boostPa), 0.5, 'crack boost, psi')
  })

  it('reports the ratio it was given, an overshoot and the time to 90 %', () => {
    const m = pull.metrics
    expectClose(m.driveRatioSeen!, s.exhaust.ratio, 1e-9)
    expect(m.overshootPa).toBeGreaterThan(0)
    expect(m.peakBoostPa).toBeGreaterThan(m.settledBoostPa!)
    expect(m.timeTo90PercentS).toBeGreaterThan(1)
    expect(m.timeTo90PercentS).toBeLessThan(m.crackTimeS! + 0.5)
    expect(pull.notes.join(' ')).toMatch(/Ratio mode/)
  })

  it('is the same pull every time and leaves its input alone', () => {
    const input = defaultScenario()
    const before = JSON.stringify(input)
    const again = runPull(input)
    expect(JSON.stringify(input)).toBe(before)
    expect(again.series).toEqual(pull.series)
    expect(again.stats).toEqual(pull.stats)
  })
})

describe('odex against a fine fixed-step RK4 on the full pull', () => {
  // RK4 at 0.1 ms is converged to about 1e-4 Pa in boost (halving the step changes it by that much).
  const reference = runPull(s, { integrator: { kind: 'rk4', stepS: 1e-4 } })

  for (const rtol of [1e-6, 1e-8]) {
    it(`agrees within 100·rtol of each state's scale at rtol ${rtol}`, () => {
      const r = rtol === s.solver.relativeTolerance ? pull : runPull(s, { relativeTolerance: rtol })
      expect(r.stats.outcome).toBe('converged')
      // Global error of a tolerance-controlled integration over ~450 steps: 100·rtol of the scale (p_amb, full lift).
      expect(maxDiff(r.series.boostPa, reference.series.boostPa)).toBeLessThan(100 * rtol * s.ambient.pressurePa)
      expect(maxDiff(r.series.liftM, reference.series.liftM)).toBeLessThan(100 * rtol * s.wastegate.maxLiftM)
      expect(maxDiff(r.series.shaftSpeedRadS, reference.series.shaftSpeedRadS)).toBeLessThan(100 * rtol * 1e4)
    })
  }

  it('gets closer as the tolerance tightens', () => {
    const loose = runPull(s, { relativeTolerance: 1e-5 })
    const tight = runPull(s, { relativeTolerance: 1e-9 })
    expect(maxDiff(tight.series.boostPa, reference.series.boostPa) * 10).toBeLessThan(
      maxDiff(loose.series.boostPa, reference.series.boostPa),
    )
    expect(tight.stats.evaluations).toBeGreaterThan(loose.stats.evaluations)
  })
})

describe('a 10 psi top-port supply', () => {
  const topped = scenarioWith({ control: { kind: 'both' }, supply: co2Supply(10) })
  const r = runPull(topped)

  it('moves the settled boost as the static formula says (MODEL.md §3)', () => {
    const areas = wastegateAreas(s.wastegate)
    const { rateNPerM } = springTotals(s.springs, areas)
    // b_at(x) = (F0 + k·x + β_t·A_p)/(r·A_v + A_p − A_s): the top supply adds β_t·A_p, the lift k·Δx.
    const slope = s.exhaust.ratio * areas.valveM2 + areas.bottomM2
    const expected = (psi(10) * areas.topM2 + rateNPerM * (r.metrics.settledLiftM! - pull.metrics.settledLiftM!)) / slope
    expect(r.flags.notSettled).toBe(false)
    expectClose(toPsi(r.metrics.settledBoostPa! - pull.metrics.settledBoostPa!), toPsi(expected), 0.01, 'shift, psi')
    expectClose(toPsi(r.metrics.settledBoostPa!), toPsi(r.metrics.staticBoostAtSettledLiftPa!), 0.01, 'settled vs static, psi')
  })

  it('cracks within 0.5 psi of its own static crack', () => {
    const crack = computeBalance(topped).crack
    if (crack.status !== 'opens') throw new Error('static crack expected')
    expectClose(toPsi(r.metrics.crackBoostPa!), toPsi(crack.boostPa), 0.5, 'crack, psi')
  })
})
