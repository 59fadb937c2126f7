import { describe, expect, it } from 'vitest'
import {
  backToBackPulls,
  co2BottleState,
  co2MinimumUsableMassKg,
  co2PullsPerBottle,
  co2EosSaturation,
  runPull,
  type TankCycle,
} from '../../src/index.ts'
import { expectClose } from '../expect-close.ts'
import { co2Supply, compressorSupply, psi, scenarioWith } from './pull-helpers.ts'

const topOnSupply = (supply: Record<string, unknown>, control: Record<string, unknown> = { kind: 'both' }) =>
  runPull(scenarioWith({ control, supply }))

/** A solenoid that bleeds the top chamber all pull long: a supply's heaviest user. */
const bleedingSolenoid = { kind: 'solenoid-3port', chamber: 'top', duty: 0.8 }

describe('CO₂ bottle supply', () => {
  const r = topOnSupply(co2Supply(10))
  /** The default bottle: a 5 lb bottle's water volume and its normal fill (scenario.ts). */
  const bottle = scenarioWith({ supply: co2Supply(10) }).supply as { bottleVolumeM3: number; fillMassKg: number }

  it('holds the bottle at the saturation pressure while liquid remains (Span & Wagner, via co2.ts)', () => {
    const pSat = co2EosSaturation(298.15).pressurePa - 101_325
    for (const p of r.series.supplyPa) expectClose(p, pSat, 1e-6, 'bottle gauge pressure')
    expect(r.series.regulatedPa.every((p) => Math.abs(p - psi(10)) < 1e-6)).toBe(true)
    expect(r.flags.supplyBelowSetpoint).toBe(false)
  })

  it('spends gas and counts the pulls a full bottle gives', () => {
    const gas = r.metrics.gasUsedPerPullKg!
    expect(gas).toBeGreaterThan(0)
    const minimum = co2MinimumUsableMassKg({ volumeM3: bottle.bottleVolumeM3, fillMassKg: bottle.fillMassKg, temperatureK: 298.15 }, 101_325 + psi(10) + 20_000)
    expect(r.metrics.pullsPerSupply).toBe(Math.floor((bottle.fillMassKg - minimum) / gas))
    const bleeding = topOnSupply(co2Supply(10), bleedingSolenoid)
    // A sealed top chamber takes only its own fill; a switching valve at 80 % duty also passes gas to its vent for
    // the fifth of each cycle it vents, all pull long: several times the fill.
    expect(bleeding.metrics.gasUsedPerPullKg!).toBeGreaterThan(3 * gas)
    expect(bleeding.metrics.pullsPerSupply!).toBeLessThan(r.metrics.pullsPerSupply!)
  })

  it('flags a nearly empty bottle that cannot hold the setpoint', () => {
    const empty = topOnSupply(co2Supply(10, { fillMassKg: 0.01 }))
    expect(empty.flags.supplyBelowSetpoint).toBe(true)
    expect(Math.max(...empty.series.regulatedPa)).toBeLessThan(psi(10))
    expect(empty.stats.outcome).toBe('converged')
  })

  it('warns about a bottle above the critical temperature', () => {
    const hot = topOnSupply(co2Supply(10, { bottleTemperatureK: 313.15 }))
    expect(hot.notes.join(' ')).toMatch(/critical temperature/)
    const state = co2BottleState({ volumeM3: bottle.bottleVolumeM3, massKg: bottle.fillMassKg, temperatureK: 313.15 })
    expectClose(hot.series.supplyPa[0]!, state.pressurePa - 101_325, 1e-3, 'supercritical bottle, Pa')
  })
})

describe('gas per pull and the number of gates', () => {
  // Every gate has its own chambers and hoses at the same pressures, so the supply feeds each of them.
  const gasWith = (count: number, control: Record<string, unknown>) => {
    const s = scenarioWith({ control, supply: co2Supply(10) })
    return runPull({ ...s, wastegate: { ...s.wastegate, count } }).metrics.gasUsedPerPullKg!
  }

  it('a solenoid passing CO₂ to its vent spends it in proportion to the gates it feeds', () => {
    const one = gasWith(1, bleedingSolenoid)
    for (const count of [2, 4]) expect(gasWith(count, bleedingSolenoid) / one, `${count} gates over 1`).toBeCloseTo(count, 0)
    expect(Math.abs(gasWith(2, bleedingSolenoid) / one / 2 - 1)).toBeLessThan(0.1)
  })

  it('sealed top chambers on more gates take more gas, never less', () => {
    const [one, two, four] = [1, 2, 4].map((count) => gasWith(count, { kind: 'both' }))
    expect(two).toBeGreaterThan(one!)
    expect(four).toBeGreaterThan(two!)
  })
})

describe('compressor and tank supply', () => {
  it('draws the tank down during a pull with the compressor off above cut-in', () => {
    const r = topOnSupply(compressorSupply(10), bleedingSolenoid)
    expect(r.metrics.tankEndPa!).toBeLessThan(r.metrics.tankStartPa!)
    expect(r.metrics.tankStartPa).toBeCloseTo(1_034_214, 0)
    expect(r.metrics.compressorDuty).toBe(0)
    expect(r.metrics.gasUsedPerPullKg!).toBeGreaterThan(0)
  })

  it('runs the compressor below cut-in and refills the tank', () => {
    const r = topOnSupply(compressorSupply(10, { initialTankPa: 700_000 }))
    expect(r.metrics.compressorDuty).toBe(1)
    expect(r.metrics.tankEndPa!).toBeGreaterThan(r.metrics.tankStartPa!)
  })

  it('switches the compressor on at cut-in during a pull', () => {
    const r = topOnSupply(compressorSupply(10, { initialTankPa: 827_371 + 2_000, ratedFlowM3PerS: 0.001 }), bleedingSolenoid)
    expect(r.metrics.compressorDuty!).toBeGreaterThan(0)
    expect(r.metrics.compressorDuty!).toBeLessThan(1)
    expect(r.stats.restarts).toBeGreaterThanOrEqual(2)
    expect(r.metrics.tankMinPa!).toBeGreaterThan(827_371 - 5_000)
  })

  it('keeps up for good on a sealed top chamber, and runs out with a small tank and a bleeding solenoid', () => {
    const sealed = topOnSupply(compressorSupply(10))
    expect(sealed.flags.supplyKeepsUp).toBe(true)
    expect(sealed.metrics.pullsPerSupply).toBeNull()
    const small = topOnSupply(
      compressorSupply(10, { tankVolumeM3: 0.001, ratedFlowM3PerS: 0.00002, cutInPa: 150_000, cutOutPa: 300_000, maxPressurePa: 400_000 }),
      bleedingSolenoid,
    )
    expect(small.flags.supplyKeepsUp).toBe(false)
    expect(small.metrics.pullsPerSupply!).toBeGreaterThan(0)
    expect(small.metrics.pullsPerSupply!).toBeLessThan(1000)
  })
})

describe('supply endurance', () => {
  const cycle: TankCycle = {
    startPa: 101_325 + 1_000_000,
    compressorOn: false,
    pullDurationS: 4,
    gasPerPullKg: 0.004,
    pressurePerKg: (287.05 * 298.15) / 0.0095,
    ratedKgS: 2e-4,
    ambientPa: 101_325,
    maxPa: 101_325 + 1_378_951,
    cutInPa: 101_325 + 827_371,
    cutOutPa: 101_325 + 1_034_214,
    holdPa: 101_325 + 800_000,
  }

  /** The same tank stepped in time (explicit Euler, 1 ms): an independent check of the closed form. */
  function stepped(c: TankCycle): number {
    let p = c.startPa
    let on = c.compressorOn
    const dt = 1e-3
    const draw = c.gasPerPullKg / c.pullDurationS
    for (let t = 0; t < 1e5; t += dt) {
      if (p < c.holdPa) return Math.floor(t / c.pullDurationS)
      if (!on && p <= c.cutInPa) on = true
      if (on && p >= c.cutOutPa) on = false
      const delivered = on ? c.ratedKgS * Math.max(0, 1 - (p - c.ambientPa) / (c.maxPa - c.ambientPa)) : 0
      p += dt * c.pressurePerKg * (delivered - draw)
    }
    return Infinity
  }

  it('counts back-to-back pulls as a time-stepped tank does', () => {
    const closed = backToBackPulls(cycle)
    expect(closed.keepsUp).toBe(false)
    expect(Math.abs(closed.pulls! - stepped(cycle))).toBeLessThanOrEqual(1)
    const strongCompressor = backToBackPulls({ ...cycle, ratedKgS: 1e-2 })
    expect(strongCompressor).toEqual({ pulls: null, keepsUp: true })
    expect(backToBackPulls({ ...cycle, startPa: cycle.holdPa - 1 })).toEqual({ pulls: 0, keepsUp: false })
  })

  it('counts pulls per bottle from the usable mass', () => {
    const bottle = { volumeM3: 0.0046, fillMassKg: 2.27, temperatureK: 298.15 }
    const minimum = co2MinimumUsableMassKg(bottle, 101_325 + psi(30))
    // The bottle holds its pressure until the liquid is gone; below that the gas phase decides.
    expect(co2BottleState({ ...bottle, massKg: minimum * 1.001 }).pressurePa).toBeGreaterThanOrEqual(101_325 + psi(30))
    expect(co2BottleState({ ...bottle, massKg: minimum * 0.99 }).pressurePa).toBeLessThan(101_325 + psi(30))
    expect(co2PullsPerBottle(bottle, 101_325 + psi(30), 0.001)).toBe(Math.floor((2.27 - minimum) / 0.001))
    expect(co2PullsPerBottle(bottle, 101_325 + psi(30), 0)).toBeNull()
  })
})
