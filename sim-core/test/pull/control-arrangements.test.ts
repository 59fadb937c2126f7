import { describe, expect, it } from 'vitest'
import { computeBalance, defaultScenario, runPull, type PullResult, type Scenario } from '../../src/index.ts'
import { expectClose } from '../expect-close.ts'
import { allFinite, co2Supply, psi, scenarioWith, toPsi } from './pull-helpers.ts'

const base = defaultScenario()
const settled = (r: PullResult) => r.metrics.settledBoostPa ?? Number.NaN

function runs(s: Scenario): PullResult {
  const r = runPull(s)
  expect(r.stats.outcome).toBe('converged')
  expect(allFinite(r.series as unknown as Record<string, number[]>)).toBe(true)
  expect(r.flags.neverOpened).toBe(false)
  return r
}

describe('every control arrangement runs and moves boost the right way', () => {
  it('nothing connected: only drive pressure opens the valve, near its static crack', () => {
    const s = scenarioWith({ control: { kind: 'none' } })
    const r = runs(s)
    const crack = computeBalance(s).crack
    if (crack.status !== 'opens') throw new Error('static crack expected')
    expectClose(toPsi(r.metrics.crackBoostPa!), toPsi(crack.boostPa), 0.5, 'crack, psi')
    expect(settled(r)).toBeGreaterThan(settled(runPull(base)))
    expectClose(toPsi(settled(r)), toPsi(r.metrics.staticBoostAtSettledLiftPa!), 0.01, 'settled vs static, psi')
  })

  it('top port on a regulated supply: more setpoint, more boost', () => {
    const low = runs(scenarioWith({ control: { kind: 'top-supply' }, supply: co2Supply(5) }))
    const high = runs(scenarioWith({ control: { kind: 'top-supply' }, supply: co2Supply(10) }))
    expect(settled(high)).toBeGreaterThan(settled(low) + psi(3))
    expectClose(toPsi(settled(high)), toPsi(high.metrics.staticBoostAtSettledLiftPa!), 0.01, 'settled vs static, psi')
  })

  it('a bleed to the top: a larger fraction holds the valve harder', () => {
    const low = runs(scenarioWith({ control: { kind: 'bleed-top', fraction: 0.1 } }))
    const high = runs(scenarioWith({ control: { kind: 'bleed-top', fraction: 0.4 } }))
    expect(settled(high)).toBeGreaterThan(settled(low))
    expectClose(toPsi(settled(high)), toPsi(high.metrics.staticBoostAtSettledLiftPa!), 0.02, 'settled vs static, psi')
  })

  it('three-port solenoid venting the bottom chamber: more duty, more boost', () => {
    const at = (duty: number) => runs(scenarioWith({ control: { kind: 'solenoid-3port', chamber: 'bottom', duty } }))
    const [a, b, c] = [at(0.1), at(0.4), at(0.8)]
    expect(settled(b)).toBeGreaterThan(settled(a))
    expect(settled(c)).toBeGreaterThan(settled(b))
    expect(a.series.duty.every((d) => d === 0.1)).toBe(true)
  })

  it('three-port solenoid feeding the top chamber from CO₂: more duty, more boost, more gas', () => {
    const at = (duty: number) =>
      runs(scenarioWith({ control: { kind: 'solenoid-3port', chamber: 'top', duty }, supply: co2Supply(15) }))
    const [a, b] = [at(0.2), at(0.6)]
    expect(settled(b)).toBeGreaterThan(settled(a))
    expect(b.metrics.gasUsedPerPullKg!).toBeGreaterThan(a.metrics.gasUsedPerPullKg!)
  })

  it('four-port solenoid: more duty, more boost', () => {
    const at = (duty: number) => runs(scenarioWith({ control: { kind: 'solenoid-4port', duty } }))
    expect(settled(at(0.6))).toBeGreaterThan(settled(at(0.2)))
  })

  it('closed loop: holds the boost target with its duty inside the limits, and the target follows rpm', () => {
    const control = { kind: 'closed-loop', targetBoostPa: psi(12), dutyMin: 0.05, dutyMax: 0.95 }
    const r = runs(scenarioWith({ control, supply: co2Supply(20) }))
    // The settled mean sits on the target; the overshoot on the way there is the next test's subject.
    expectClose(toPsi(settled(r)), 12, 0.5, 'settled boost, psi')
    expect(Math.min(...r.series.duty)).toBeGreaterThanOrEqual(0.05 - 1e-12)
    expect(Math.max(...r.series.duty)).toBeLessThanOrEqual(0.95 + 1e-12)
    expect(r.flags.heldOpenByDrive).toBe(false)
    const byRpm = runs(
      scenarioWith({
        control: { ...control, targetByRpm: [{ rpm: 4500, boostPa: psi(10) }, { rpm: 6500, boostPa: psi(14) }] },
        supply: co2Supply(20),
      }),
    )
    // Over the last half second the rpm target is 13.5–14 psi against the fixed 12.
    const lastHalfSecond = (p: PullResult) => {
      const tail = p.series.boostPa.slice(-50)
      return tail.reduce((a, b) => a + b, 0) / tail.length
    }
    expect(lastHalfSecond(byRpm) - lastHalfSecond(r)).toBeGreaterThan(psi(1))
  })

  it('closed loop with the default gains: the default scenario reaches a 12 psi target with little overshoot and settles', () => {
    // Top port on boost through the solenoid, every other input the default scenario's.
    const r = runs(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12) } }))
    expect(toPsi(r.metrics.peakBoostPa) - 12).toBeLessThan(1.5)
    expectClose(toPsi(settled(r)), 12, 0.3, 'settled boost, psi')
    expect(r.flags.notSettled).toBe(false)
    // The base duty is the one that cracks the valve at the target: it cracks there.
    expectClose(toPsi(r.metrics.crackBoostPa!), 12, 0.5, 'crack, psi')
  })

  it('closed loop: a derivative on boost cracks the valve earlier on a fast spool and peaks lower', () => {
    // The valve has to crack while boost still climbs fast; proportional and integral action alone wait for the error.
    const without = runs(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12) } }))
    const withD = runs(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12), derivativeSPerPa: 3e-7 } }))
    expect(withD.metrics.crackBoostPa!).toBeLessThan(without.metrics.crackBoostPa! - psi(0.5))
    expect(withD.metrics.peakBoostPa).toBeLessThan(without.metrics.peakBoostPa - psi(0.2))
    expectClose(toPsi(settled(withD)), 12, 0.3, 'settled boost with a derivative, psi')
  })

  it('closed loop on a CO₂ top supply far above what the target needs: overshoot while the top chamber vents, less with the duty capped', () => {
    // At full duty during the spool the top chamber fills towards 20 psi and must vent through the solenoid before the
    // valve can crack; capping the duty near what holding the target takes keeps it lower.
    const at = (dutyMax: number) =>
      runs(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12), dutyMax }, supply: co2Supply(20) }))
    const open = at(1)
    const capped = at(0.3)
    expect(toPsi(open.metrics.peakBoostPa) - 12).toBeGreaterThan(3)
    expect(toPsi(capped.metrics.peakBoostPa) - 12).toBeLessThan(1.5)
    expectClose(toPsi(settled(capped)), 12, 0.3, 'settled boost with the duty capped, psi')
  })

  it('a closed loop without integral action still runs (anti-windup has nothing to track)', () => {
    const r = runs(scenarioWith({ control: { kind: 'closed-loop', targetBoostPa: psi(12), integralPerPaS: 0 }, supply: co2Supply(20) }))
    expect(settled(r)).toBeGreaterThan(psi(8))
  })
})

describe('one compressible divider for both levels (MODEL.md §4b)', () => {
  // Every arrangement on the default scenario held near one engine speed (5,900 to 6,000 rpm), so that the valve
  // comes to rest rather than creeping open with rpm (a creeping valve squeezes its top chamber, a real lag of a
  // tenth of a psi): the static balance at the settled lift (its chambers from the steady divider of
  // steady-chamber.ts) against the pull (its chambers integrated, or quasi-static through the same divider).
  const ARRANGEMENTS: [string, Record<string, unknown>][] = [
    ['nothing connected', { control: { kind: 'none' } }],
    ['bottom on boost', { control: { kind: 'bottom-boost' } }],
    ['top on CO₂', { control: { kind: 'top-supply' }, supply: co2Supply(6) }],
    ['both ports', { control: { kind: 'both' }, supply: co2Supply(6) }],
    ['bleed to the top', { control: { kind: 'bleed-top', fraction: 0.3 } }],
    ['three-port on the bottom', { control: { kind: 'solenoid-3port', chamber: 'bottom', duty: 0.5 } }],
    ['three-port on the top, CO₂', { control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 }, supply: co2Supply(10) }],
    ['four-port', { control: { kind: 'solenoid-4port', duty: 0.5 } }],
    ['closed loop', { control: { kind: 'closed-loop', targetBoostPa: psi(12) } }],
  ]
  for (const [name, patch] of ARRANGEMENTS) {
    it(`${name}: the settled pull meets the static balance at its settled lift within 0.05 psi`, () => {
      const r = runs(scenarioWith({ engine: { ...base.engine, rpmStart: 5900, rpmEnd: 6000 }, ...patch }))
      expect(r.flags.notSettled).toBe(false)
      expectClose(toPsi(settled(r)), toPsi(r.metrics.staticBoostAtSettledLiftPa!), 0.05, 'settled vs static at the settled lift, psi')
    })
  }
})

describe('downstream of the valve and the turbine mode', () => {
  it('a restricted dump backs up against the valve and raises boost', () => {
    const r = runs(
      scenarioWith({ exhaust: { ...base.exhaust, downstream: { kind: 'restricted', coefficientPaPerKg2S2: 2e6 } } }),
    )
    expect(settled(r)).toBeGreaterThan(settled(runPull(base)) + psi(0.3))
  })

  it('a recirculated gate sees the turbine outlet pressure', () => {
    const r = runs(scenarioWith({ exhaust: { ...base.exhaust, downstream: { kind: 'recirculated' } } }))
    expect(settled(r)).toBeGreaterThan(settled(runPull(base)))
  })

  it('turbine mode: the ratio comes out of the model, and the static balance at that ratio matches', () => {
    const tight = runs(scenarioWith({ exhaust: { ...base.exhaust, mode: 'turbine', turbineAreaM2: 5e-4 } }))
    const open = runs(scenarioWith({ exhaust: { ...base.exhaust, mode: 'turbine', turbineAreaM2: 8e-4 } }))
    // A smaller turbine backs up more drive pressure for the same boost.
    expect(tight.metrics.driveRatioSeen!).toBeGreaterThan(open.metrics.driveRatioSeen!)
    expect(tight.notes.join(' ')).not.toMatch(/Ratio mode/)
    for (const r of [tight, open]) {
      expectClose(toPsi(settled(r)), toPsi(r.metrics.staticBoostAtSettledLiftPa!), 0.01, 'settled vs static, psi')
    }
  })
})

describe('chambers full or quasi-static (MODEL.md §4a)', () => {
  // A 0.5 mm restrictor in the bottom line: a damping jet, smaller than shops fit, to make a chamber slow.
  const restricted = () => scenarioWith({ plumbing: { bottom: { restrictorDiameterM: 0.0005 } } })

  it('treats ordinary plumbing (1/8 NPT ports, 4 mm hose) as quasi-static and a chamber behind a 0.5 mm restrictor as full', () => {
    expect(runPull(base).stats.chambers).toEqual({ top: 'quasi-static', bottom: 'quasi-static' })
    expect(runPull(restricted()).stats.chambers).toEqual({ top: 'quasi-static', bottom: 'full' })
  })

  it('with ordinary plumbing both treatments crack and settle alike; behind the restrictor quasi-static is measurably off the crack', () => {
    const full = runPull(base, { chambers: 'full' })
    const quasi = runPull(base)
    expect(full.stats.outcome).toBe('converged')
    expectClose(toPsi(settled(full)), toPsi(settled(quasi)), 0.01, 'settled, psi')
    expectClose(toPsi(full.metrics.crackBoostPa!), toPsi(quasi.metrics.crackBoostPa!), 0.01, 'crack, psi')
    const slowQuasi = runPull(restricted(), { chambers: 'quasi-static' })
    expect(Math.abs(toPsi(runPull(restricted()).metrics.crackBoostPa! - slowQuasi.metrics.crackBoostPa!))).toBeGreaterThan(0.05)
  })
})
