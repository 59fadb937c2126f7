import { describe, expect, it } from 'vitest'
import {
  computeBalance,
  defaultScenario,
  fromSI,
  parseScenario,
  toSI,
  units,
  wastegateAreas,
  type Scenario,
} from '../src/index.ts'
import { expectClose } from './expect-close.ts'

const inch = (v: number) => toSI(units.in, v)
const psi = (v: number) => toSI(units.psi, v)
const toPsi = (pa: number) => fromSI(units.psi, pa)
const toIn2 = (m2: number) => fromSI(units.in2, m2)
const toLbf = (n: number) => fromSI(units.lbf, n)

/** The gate of a worked example of the trade (common practice, no source): radii 1.092, 0.193, 0.9085 in. */
function workedExample(patch: (s: Scenario) => Scenario = (s) => s): Scenario {
  const base = defaultScenario()
  return patch({
    ...base,
    wastegate: {
      ...base.wastegate,
      actuatorDiameterM: inch(2 * 1.092),
      shaftDiameterM: inch(2 * 0.193),
      valveDiameterM: inch(2 * 0.9085),
    },
    springs: [{ from: 'bench', benchCrackPressurePa: psi(8), rateNPerM: 0 }],
    control: { kind: 'none' },
    exhaust: { ...base.exhaust, ratio: 1, driveAtZeroBoostPa: 0, downstream: { kind: 'vented' } },
  })
}

describe('worked example of the trade (common practice, no source)', () => {
  const a = wastegateAreas(workedExample().wastegate)

  it('gives the areas of the example', () => {
    expectClose(toIn2(a.actuatorM2), 3.75, 0.005, 'piston area, in²')
    expectClose(toIn2(a.shaftM2), 0.117, 0.0005, 'shaft area, in²')
    expectClose(toIn2(a.valveM2), 2.59, 0.005, 'valve area, in²')
    // The example rounds 2.59 − 0.117 and 3.75 − 0.117; exact areas differ from it in the third decimal.
    expectClose(toIn2(a.valveBackM2), 2.473, 0.005, 'valve back side, in²')
    expectClose(toIn2(a.bottomM2), 3.633, 0.005, 'piston underside, in²')
  })

  it('turns bench crack pressures into seat forces, and nested springs add', () => {
    const eight = computeBalance(workedExample())
    expectClose(toLbf(eight.seatForceN), 29, 0.1, '8 psi bench spring, lbf')
    const eightAndHalf = computeBalance(
      workedExample((s) => ({ ...s, springs: [{ from: 'bench', benchCrackPressurePa: psi(8.5), rateNPerM: 0 }] })),
    )
    expectClose(toLbf(eightAndHalf.seatForceN), 30.9, 0.1, '8.5 psi bench spring, lbf')
    const nested = computeBalance(
      workedExample((s) => ({
        ...s,
        control: { kind: 'bottom-boost' },
        exhaust: { ...s.exhaust, ratio: 0.5, driveAtZeroBoostPa: 0 },
        springs: [
          { from: 'bench', benchCrackPressurePa: psi(8), rateNPerM: 0 },
          { from: 'bench', benchCrackPressurePa: psi(8.5), rateNPerM: 0 },
        ],
      })),
    )
    expectClose(toLbf(nested.seatForceN), 59.9, 0.1, 'both springs, lbf')
    // On the bench (no exhaust pressure) the pair cracks at 16.5 psi on the bottom port.
    const bench = toLbf(nested.seatForceN) / toIn2(a.bottomM2)
    expectClose(bench, 16.5, 0.05, 'bench crack of both, psi')
  })

  it('needs about 11.2 psi of drive pressure with nothing connected: 11 psi of boost at 1:1, 5.6 at 2:1', () => {
    const s = workedExample((x) => ({ ...x, springs: [{ from: 'seat', seatForceN: toSI(units.lbf, 29), rateNPerM: 0 }] }))
    const oneToOne = computeBalance(s)
    expect(oneToOne.crack.status).toBe('opens')
    if (oneToOne.crack.status !== 'opens') return
    expectClose(toPsi(oneToOne.crack.boostPa), 11.2, 0.05, 'crack at 1:1, psi')
    const twoToOne = computeBalance({ ...s, exhaust: { ...s.exhaust, ratio: 2 } })
    expect(twoToOne.crack).toMatchObject({ status: 'opens' })
    if (twoToOne.crack.status === 'opens') expectClose(toPsi(twoToOne.crack.boostPa), 5.6, 0.05, 'crack at 2:1, psi')
  })

  it('cracks two wastegates at the same boost as one', () => {
    const one = computeBalance(workedExample())
    const two = computeBalance(workedExample((s) => ({ ...s, wastegate: { ...s.wastegate, count: 2 } })))
    expect(two.crack).toEqual(one.crack)
  })
})

describe('computeBalance', () => {
  it('puts the bottom port on boost: crack = F0 / (r·A_v + A_p − A_s)', () => {
    const s = defaultScenario()
    const b = computeBalance(s)
    const a = b.areas
    const expected = b.seatForceN / (s.exhaust.ratio * a.valveM2 + a.bottomM2)
    expect(b.crack.status).toBe('opens')
    if (b.crack.status === 'opens') expectClose(b.crack.boostPa, expected, 1e-9 * expected, 'crack boost, Pa')
    if (b.fullOpen.status === 'opens' && b.crack.status === 'opens') {
      expect(b.fullOpen.boostPa).toBeGreaterThan(b.crack.boostPa)
    }
  })

  it('balances the forces at crack to zero, drive and bottom opening, spring closing', () => {
    const b = computeBalance(defaultScenario())
    expect(b.forcesAtCrack).not.toBeNull()
    const sum = (b.forcesAtCrack ?? []).reduce((n, f) => n + f.forceN, 0)
    expectClose(sum, 0, 1e-9 * b.seatForceN, 'sum of forces, N')
    const byKey = Object.fromEntries((b.forcesAtCrack ?? []).map((f) => [f.key, f.forceN]))
    expect(byKey.drive).toBeGreaterThan(0)
    expect(byKey.bottom).toBeGreaterThan(0)
    expect(byKey.spring).toBeCloseTo(-b.seatForceN, 9)
  })

  it('moves crack boost by the setpoint times A_p / slope for a regulated top port', () => {
    const base = defaultScenario()
    const s: Scenario = {
      ...base,
      control: { kind: 'both' },
      supply: {
        kind: 'co2',
        regulatorSetpointPa: psi(10),
        regulatorDroopPa: 0,
        bottleVolumeM3: 0.0046,
        fillMassKg: 2.27,
        bottleTemperatureK: 298.15,
        sessionPulls: 10,
        sessionArmedS: 1800,
        ventAfterEachPull: false,
      },
    }
    const without = computeBalance(base)
    const withTop = computeBalance(s)
    const a = withTop.areas
    const shift = (psi(10) * a.topM2) / (base.exhaust.ratio * a.valveM2 + a.bottomM2)
    if (without.crack.status !== 'opens' || withTop.crack.status !== 'opens') throw new Error('expected both to open')
    expectClose(withTop.crack.boostPa - without.crack.boostPa, shift, 1e-6, 'shift, Pa')
  })

  it('reports "never opens" when top-port boost outweighs drive pressure, never a negative number', () => {
    const base = defaultScenario()
    const b = computeBalance({ ...base, control: { kind: 'top-supply' }, exhaust: { ...base.exhaust, ratio: 1 } })
    expect(b.crack.status).toBe('never-opens')
    expect(b.forcesAtCrack).toBeNull()
  })

  it('reports "open at zero boost" when drive at zero boost beats the spring', () => {
    const base = defaultScenario()
    const b = computeBalance({ ...base, exhaust: { ...base.exhaust, driveAtZeroBoostPa: psi(40) } })
    expect(b.crack.status).toBe('open-at-zero-boost')
  })

  it('gives the crack boost over ratios 1.0 to 2.0, falling as the ratio rises', () => {
    const b = computeBalance(defaultScenario())
    expect(b.ratioSweep).toHaveLength(21)
    expect(b.ratioSweep[0]?.ratio).toBe(1)
    expectClose(b.ratioSweep[20]?.ratio ?? NaN, 2, 1e-12, 'last ratio')
    const boosts = b.ratioSweep.map((p) => (p.crack.status === 'opens' ? p.crack.boostPa : NaN))
    for (let i = 1; i < boosts.length; i++) expect(boosts[i]!).toBeLessThan(boosts[i - 1]!)
  })

  it('raises crack boost with a recirculated dump, whose downstream pressure closes the valve', () => {
    const base = defaultScenario()
    const vented = computeBalance(base)
    const recirc = computeBalance({ ...base, exhaust: { ...base.exhaust, downstream: { kind: 'recirculated' } } })
    if (vented.crack.status !== 'opens' || recirc.crack.status !== 'opens') throw new Error('expected both to open')
    expect(recirc.crack.boostPa).toBeGreaterThan(vented.crack.boostPa)
    const sum = (recirc.forcesAtCrack ?? []).reduce((n, f) => n + f.forceN, 0)
    expectClose(sum, 0, 1e-6 * recirc.seatForceN, 'sum of forces with recirculation, N')
  })
})

describe('parseScenario', () => {
  it('accepts the default scenario', () => {
    expect(parseScenario(defaultScenario()).ok).toBe(true)
  })

  it('names the field of a negative diameter', () => {
    const s = defaultScenario()
    const r = parseScenario({ ...s, wastegate: { ...s.wastegate, valveDiameterM: -0.01 } })
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.issues).toContainEqual({ path: 'wastegate.valveDiameterM', message: 'must be greater than 0' })
  })

  it('rejects a valve no larger than its shaft, with the reason', () => {
    const s = defaultScenario()
    const r = parseScenario({ ...s, wastegate: { ...s.wastegate, valveDiameterM: 0.005, shaftDiameterM: 0.008 } })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.issues).toContainEqual({ path: 'wastegate.valveDiameterM', message: 'must be larger than wastegate.shaftDiameterM' })
    }
  })

  it('names a missing field and an unknown one', () => {
    const { exhaust, ...rest } = defaultScenario()
    const r = parseScenario({ ...rest, exhaust: { ...exhaust, ratio: undefined }, colour: 'red' })
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.issues).toContainEqual({ path: 'exhaust.ratio', message: 'is required' })
      expect(r.issues.map((i) => i.path)).toContain('colour')
    }
  })
})
