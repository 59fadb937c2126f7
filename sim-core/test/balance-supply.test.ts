import { describe, expect, it } from 'vitest'
import {
  co2BottleState,
  computeBalance,
  defaultScenario,
  toSI,
  units,
  type Scenario,
  type Supply,
} from '../src/index.ts'
import { expectClose } from './expect-close.ts'

const psi = (v: number) => toSI(units.psi, v)

/** The default gate with its bottom port on boost and its top port on `supply`. */
function withTopSupply(supply: Supply): Scenario {
  return { ...defaultScenario(), control: { kind: 'both' }, supply }
}

/** Crack boost of MODEL.md §3 for bottom port on boost and a fixed top pressure β_t: (F0 + β_t·A_p)/(r·A_v + A_p − A_s). */
function expectedCrack(s: Scenario, topPa: number): number {
  const b = computeBalance(s)
  const a = b.areas
  return (b.seatForceN + topPa * a.topM2) / (s.exhaust.ratio * a.valveM2 + a.bottomM2)
}

/** The session a supply plans for (scenario.ts defaults); the static balance does not read it. */
const SESSION = { sessionPulls: 10, sessionArmedS: 1800, ventAfterEachPull: false }

const co2 = (patch: Partial<Extract<Supply, { kind: 'co2' }>>): Supply => ({
  kind: 'co2',
  regulatorSetpointPa: psi(10),
  regulatorDroopPa: 20_000,
  bottleVolumeM3: 0.0046,
  fillMassKg: 2.27,
  bottleTemperatureK: 298.15,
  ...SESSION,
  ...patch,
})

describe('static top-port source of a CO₂ bottle: min(setpoint, p_bottle − droop)', () => {
  it('delivers the setpoint while the bottle is far above it', () => {
    const s = withTopSupply(co2({}))
    const b = computeBalance(s)
    expect(b.supply).toMatchObject({ kind: 'co2', deliveredPa: psi(10), belowSetpoint: false })
    const bottle = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: 298.15 })
    expectClose(b.supply?.sourcePa ?? NaN, bottle.pressurePa - s.ambient.pressurePa, 1e-6, 'bottle gauge pressure, Pa')
    if (b.crack.status !== 'opens') throw new Error('expected the valve to open')
    expectClose(b.crack.boostPa, expectedCrack(s, psi(10)), 1e-6, 'crack boost, Pa')
  })

  it('falls to the bottle pressure less droop when a nearly empty bottle cannot hold the setpoint', () => {
    // 12 g left in 4.6 L at 25 °C: all vapour, about 45 kPa gauge, under 10 psi plus the droop.
    const s = withTopSupply(co2({ fillMassKg: 0.012 }))
    const b = computeBalance(s)
    const bottle = co2BottleState({ volumeM3: 0.0046, massKg: 0.012, temperatureK: 298.15 })
    expect(bottle.phase).toBe('gas')
    const delivered = bottle.pressurePa - s.ambient.pressurePa - 20_000
    expect(delivered).toBeGreaterThan(0)
    expect(delivered).toBeLessThan(psi(10))
    expect(b.supply?.belowSetpoint).toBe(true)
    expectClose(b.supply?.deliveredPa ?? NaN, delivered, 1e-6, 'delivered, Pa')
    if (b.crack.status !== 'opens') throw new Error('expected the valve to open')
    expectClose(b.crack.boostPa, expectedCrack(s, delivered), 1e-6, 'crack boost, Pa')
  })

  it('follows the saturation pressure of a cold bottle against a high setpoint', () => {
    // At 230 K (−43 °C) the bottle holds about 0.89 MPa absolute; a 1.5 MPa setpoint is out of reach.
    const s = withTopSupply(co2({ regulatorSetpointPa: 1_500_000, bottleTemperatureK: 230 }))
    const b = computeBalance(s)
    expect(b.supply?.bottle?.phase).toBe('two-phase')
    expect(b.supply?.belowSetpoint).toBe(true)
    expectClose(b.supply?.deliveredPa ?? NaN, (b.supply?.sourcePa ?? NaN) - 20_000, 1e-6, 'delivered, Pa')
  })

  it('passes on the bottle warning when the bottle is above the critical temperature', () => {
    const b = computeBalance(withTopSupply(co2({ bottleTemperatureK: 318.15 })))
    expect(b.supply?.bottle?.phase).toBe('supercritical')
    expect(b.supply?.warning).toMatch(/rises fast with temperature/)
  })

  it('keeps the balance at the setpoint and says why when the fill cannot fit in the bottle', () => {
    const b = computeBalance(withTopSupply(co2({ fillMassKg: 10, bottleVolumeM3: 0.002 })))
    expect(b.supply).toMatchObject({ sourcePa: null, deliveredPa: psi(10) })
    expect(b.supply?.warning).toMatch(/cannot fit/)
  })
})

describe('static top-port source of a compressor: min(setpoint, cut-in − droop)', () => {
  const compressor = (setpointPa: number): Supply => ({
    kind: 'compressor',
    regulatorSetpointPa: setpointPa,
    regulatorDroopPa: 20_000,
    tankVolumeM3: 0.0095,
    cutInPa: psi(120),
    cutOutPa: psi(150),
    ratedFlowM3PerS: 0.00047,
    maxPressurePa: psi(200),
    ...SESSION,
  })

  it('delivers the setpoint when the tank at cut-in is above it', () => {
    const s = withTopSupply(compressor(psi(15)))
    const b = computeBalance(s)
    expect(b.supply).toMatchObject({ kind: 'compressor', sourcePa: psi(120), deliveredPa: psi(15), belowSetpoint: false })
    if (b.crack.status !== 'opens') throw new Error('expected the valve to open')
    expectClose(b.crack.boostPa, expectedCrack(s, psi(15)), 1e-6, 'crack boost, Pa')
  })

  it('delivers the cut-in pressure less droop when the setpoint is above it', () => {
    const s = { ...withTopSupply(compressor(psi(125))), control: { kind: 'top-supply' } as const }
    const b = computeBalance(s)
    const delivered = psi(120) - 20_000
    expect(b.supply?.belowSetpoint).toBe(true)
    expectClose(b.supply?.deliveredPa ?? NaN, delivered, 1e-6, 'delivered, Pa')
    expect(b.chambers.betaTopPa).toBeCloseTo(delivered, 6)
  })

  it('has no regulated supply when boost is the source', () => {
    expect(computeBalance(defaultScenario()).supply).toBeNull()
  })
})
