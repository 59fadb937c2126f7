import { describe, expect, it } from 'vitest'
import { defaultScenario, runPull, type PullResult, type Scenario } from '../../src/index.ts'
import { toPsi } from './pull-helpers.ts'

/**
 * MODEL.md §4b, start of a pull: a pull starts from a defined physical state (the shaft where the compressor just
 * feeds the engine at zero boost, the manifolds at what that passes), so a constant nobody can observe does not
 * move what the pull predicts. The shaft's lowest speed is such a constant: halved or doubled, no metric moves by
 * more than 2 %, and the intake manifold never falls below ambient at wide-open throttle.
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
})
