import { describe, expect, it } from 'vitest'
import { computeBalance, defaultScenario, runPull, type PullResult, type Scenario } from '../../src/index.ts'
import { psi, toPsi } from './pull-helpers.ts'

/**
 * MODEL.md §4b, start of a pull: a pull starts from a defined physical state (the shaft where the compressor just
 * feeds the engine at zero boost, the manifolds at what that passes), so a constant nobody can observe does not
 * move what the pull predicts. The shaft's lowest speed is such a constant: halved or doubled, no metric moves by
 * more than 2 %, and the intake manifold never falls below ambient at wide-open throttle. The drive pressure at zero
 * boost is the other: the pull does not take it at zero boost (the exhaust flow sets the drive pressure there), only as
 * part of the drive line toward the crack, where the static balance (§3) uses it; there it must act exactly as the
 * same drive pressure at the crack given by a steeper ratio.
 */

const base = defaultScenario()
const withIdle = (factor: number): Scenario => ({ ...base, turbo: { ...base.turbo, idleSpeedRadS: base.turbo.idleSpeedRadS * factor } })

const metrics = (r: PullResult) => ({
  crackBoostPa: r.metrics.crackBoostPa!,
  crackTimeS: r.metrics.crackTimeS!,
  peakBoostPa: r.metrics.peakBoostPa,
  settledBoostPa: r.metrics.settledBoostPa!,
  timeTo90PercentS: r.metrics.timeTo90PercentS!,
})

describe('the start of a pull (MODEL.md §4b)', () => {
  const reference = runPull(base)

  it('starts at zero boost and never pulls the intake manifold below ambient at wide-open throttle', () => {
    expect(Math.abs(toPsi(reference.series.boostPa[0]!))).toBeLessThan(1e-3)
    for (const factor of [0.5, 1, 2]) {
      const r = factor === 1 ? reference : runPull(withIdle(factor))
      expect(toPsi(Math.min(...r.series.boostPa)), `lowest boost with the idle speed × ${factor}, psi`).toBeGreaterThan(-0.05)
    }
  })

  it('moves no metric by more than 2 % when the shaft’s lowest speed is halved or doubled', () => {
    const ref = metrics(reference)
    for (const factor of [0.5, 2]) {
      const r = runPull(withIdle(factor))
      expect(r.stats.outcome).toBe('converged')
      const m = metrics(r)
      for (const key of Object.keys(ref) as (keyof typeof ref)[]) {
        expect(Math.abs(m[key] / ref[key] - 1), `${key} with the idle speed × ${factor}`).toBeLessThanOrEqual(0.02)
      }
    }
  })

  const withIntercept = (driveAtZeroBoostPa: number, ratio = base.exhaust.ratio): Scenario => ({
    ...base,
    exhaust: { ...base.exhaust, driveAtZeroBoostPa, ratio },
  })

  /** The ratio that gives, with nothing at zero boost, the drive pressure the line with `zero` gives at §3's crack. */
  const steeperFor = (zero: number): Scenario => {
    const crack = computeBalance(withIntercept(zero)).crack
    if (crack.status !== 'opens') throw new Error('the default spring should crack')
    return withIntercept(0, base.exhaust.ratio + zero / crack.boostPa)
  }

  it('takes the drive pressure at zero boost as the drive it adds at the crack, like a steeper ratio, up to the crack', () => {
    for (const zero of [psi(0.5), psi(1), psi(2)]) {
      const a = runPull(withIntercept(zero))
      const b = runPull(steeperFor(zero))
      const label = `${toPsi(zero)} psi at zero boost`
      // Both lines give §3 the same crack and the pull the same turbine; below the crack they are the same line.
      expect(Math.abs(toPsi(a.metrics.crackBoostPa! - b.metrics.crackBoostPa!)), `${label}: crack boost, psi`).toBeLessThan(0.01)
      expect(Math.abs(a.metrics.crackTimeS! / b.metrics.crackTimeS! - 1), `${label}: crack time`).toBeLessThan(0.01)
      // At zero boost the exhaust flow alone sets the drive pressure: no jump of the intercept's size at the start.
      expect(Math.abs(toPsi(a.series.drivePa[0]! - b.series.drivePa[0]!)), `${label}: drive at the start, psi`).toBeLessThan(1e-6)
      for (let i = 0; a.series.timeS[i]! < a.metrics.crackTimeS!; i++) {
        expect(Math.abs(toPsi(a.series.boostPa[i]! - b.series.boostPa[i]!)), `${label}: boost at ${a.series.timeS[i]} s, psi`).toBeLessThan(0.01)
      }
    }
  })
})
