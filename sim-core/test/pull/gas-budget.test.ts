import { describe, expect, it } from 'vitest'
import {
  chamberPlumbing,
  chamberVolumes,
  co2GasDensityKgM3,
  gasBudget,
  orificeFlowKgS,
  flowFunctionFor,
  openAreaM2,
  runPull,
  staticChambers,
  CO2_GAS_CONSTANT,
} from '../../src/index.ts'
import { compressorSupply, co2Supply, psi, scenarioWith } from './pull-helpers.ts'

/** MODEL.md §4b, gas budget: what a day's running costs a supply, and where it goes. */

describe('gas budget of a regulated supply', () => {
  it('sealed top chambers and their lines hold what CO₂ at the setpoint weighs in them, on every gate (Span & Wagner)', () => {
    const s = scenarioWith({ control: { kind: 'both' }, supply: co2Supply(10) })
    const two = { ...s, wastegate: { ...s.wastegate, count: 2 } }
    const budget = gasBudget(two, runPull(two))!
    const volume = chamberVolumes(two.wastegate).topM3 + chamberPlumbing(two).top.lineVolumeM3
    // Density from the reference equation of state (co2.ts), not the ideal gas the chambers use: within 1 % at 10 psi.
    const rho = co2GasDensityKgM3(two.ambient.pressurePa + psi(10), two.ambient.temperatureK)
    expect(Math.abs(budget.heldKg / (2 * rho * volume) - 1)).toBeLessThan(0.01)
    // Sealed: nothing passes while armed.
    expect(budget.armedKgPerS).toBe(0)
  })

  it('a three-port solenoid between CO₂ and a vent passes, while armed, what leaves through its vent', () => {
    const s = scenarioWith({ control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 }, supply: co2Supply(15) })
    const budget = gasBudget(s, runPull(s))!
    expect(budget.armedKgPerS).toBeGreaterThan(0)
    // Steady, the chamber passes on what it takes: the outflow through the vent path at the divider's pressure.
    const vent = chamberPlumbing(s).top.connections.find((k) => k.source === 'ambient')!
    const pTop = s.ambient.pressurePa + staticChambers(s).at(0).topPa
    const out = orificeFlowKgS(openAreaM2(vent, 0.5), pTop, s.ambient.pressurePa, Math.sqrt(CO2_GAS_CONSTANT * s.ambient.temperatureK), flowFunctionFor(1.29))
    expect(budget.armedKgPerS / out).toBeCloseTo(1, 6)
  })

  it('adds a session of pulls and armed minutes, and says when it needs more than a full bottle', () => {
    const s = scenarioWith({ control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 }, supply: co2Supply(15) })
    const pull = runPull(s)
    const day = gasBudget(s, pull)!
    // The scenario's own session: ten pulls over half an hour armed by default (scenario.ts).
    expect(day.session.plan).toEqual({ pulls: 10, armedS: 1800, ventAfterEachPull: false })
    expect(day.session.kg).toBeCloseTo(10 * day.perPullKg + 30 * 60 * day.armedKgPerS, 12)
    expect(day.session.emptiesBottle).toBe(false)
    const long = gasBudget(s, pull, { pulls: 10, armedS: 600 * 60, ventAfterEachPull: true })!
    expect(long.session.kg).toBeCloseTo(10 * (day.perPullKg + day.heldKg) + 600 * 60 * day.armedKgPerS, 12)
    expect(long.session.shareOfBottle!).toBeGreaterThan(1)
    expect(long.session.emptiesBottle).toBe(true)
    // A plan written into the scenario is the one the budget takes.
    const planned = { ...s, supply: { ...s.supply, sessionPulls: 3, sessionArmedS: 600, ventAfterEachPull: true } } as typeof s
    expect(gasBudget(planned, pull)!.session.kg).toBeCloseTo(3 * (day.perPullKg + day.heldKg) + 600 * day.armedKgPerS, 12)
    expect(() => gasBudget(s, pull, { pulls: -1, armedS: 0, ventAfterEachPull: false })).toThrow(/plan\.pulls/)
  })

  it('a compressor wins a pull back in seconds; boost as the source has no budget', () => {
    const s = scenarioWith({ control: { kind: 'both' }, supply: compressorSupply(20) })
    const budget = gasBudget(s, runPull(s))!
    expect(budget.session.shareOfBottle).toBeNull()
    expect(budget.tankRecoveryS!).toBeGreaterThan(0)
    expect(budget.tankRecoveryS!).toBeLessThan(60)
    const onBoost = scenarioWith({})
    expect(gasBudget(onBoost, runPull(onBoost))).toBeNull()
  })
})
