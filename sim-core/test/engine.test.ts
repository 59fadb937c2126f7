import { describe, expect, it } from 'vitest'
import {
  exhaustFlowKgS,
  fourStrokeAirFlowKgS,
  intercooledChargeTemperatureK,
  interpolateTable,
  rpmAt,
} from '../src/engine.ts'
import { toSI, units } from '../src/units.ts'
import { expectClose } from './expect-close.ts'

describe('four-stroke engine', () => {
  it('flows about 0.532 kg/s at 5.3 L, 6000 rpm, VE 0.90, 15 psi gauge, 320 K (IC engine texts; computed)', () => {
    const p = 101_325 + toSI(units.psi, 15)
    // ṁ = η_v·p/(R·T)·V_d·N/120 = 0.9 · 204 746/(287.05·320) · 0.0053 · 6000/120 = 0.5316 kg/s.
    expectClose(fourStrokeAirFlowKgS(0.9, p, 320, 0.0053, 6000), 0.532, 0.001, 'air flow, kg/s')
  })

  it('adds the fuel to the exhaust', () => {
    expectClose(exhaustFlowKgS(0.5, 12.5), 0.54, 1e-12)
  })

  it('ramps rpm linearly over the pull and holds it after', () => {
    const e = { rpmStart: 3000, rpmEnd: 7000, pullDurationS: 4 }
    expect(rpmAt(e, 0)).toBe(3000)
    expect(rpmAt(e, 1)).toBe(4000)
    expect(rpmAt(e, 5)).toBe(7000)
  })

  it('interpolates a table over rpm and holds its ends', () => {
    const rpm = [2000, 4000, 6000]
    const ve = [0.8, 0.95, 0.9]
    expect(interpolateTable(rpm, ve, 1000)).toBe(0.8)
    expectClose(interpolateTable(rpm, ve, 3000), 0.875, 1e-12)
    expect(interpolateTable(rpm, ve, 7000)).toBe(0.9)
  })

  it('cools the charge by the intercooler effectiveness', () => {
    // Π = 2, η_c = 0.72: T_out = 298.15·(1 + (2^(2/7) − 1)/0.72) ≈ 388.8 K; ε = 1 returns ambient.
    expectClose(intercooledChargeTemperatureK(298.15, 2, 0.72, 0), 388.8, 0.1)
    expectClose(intercooledChargeTemperatureK(298.15, 2, 0.72, 1), 298.15, 1e-9)
    expectClose(intercooledChargeTemperatureK(298.15, 2, 0.72, 0.75), 298.15 + 0.25 * (388.8 - 298.15), 0.05)
  })
})
