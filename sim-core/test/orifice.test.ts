import { describe, expect, it } from 'vitest'
import { AIR } from '../src/gas.ts'
import {
  LINEAR_CONTINUATION_WIDTH,
  criticalPressureRatio,
  flowFunction,
  flowFunctionFor,
  orificeFlowKgS,
  orificeMassFlowKgS,
} from '../src/orifice.ts'
import { expectClose } from './expect-close.ts'

const air = (pressureAPa: number, pressureBPa: number, areaM2 = 1, dischargeCoefficient = 1) =>
  orificeMassFlowKgS({ dischargeCoefficient, areaM2, pressureAPa, pressureBPa, gasConstant: AIR.gasConstant, gamma: 1.4, temperatureK: 300 })

describe('compressible orifice flow', () => {
  it('chokes below the critical ratio 0.5283 at γ = 1.4 (NASA Glenn Research Center, "Mass flow choking")', () => {
    expectClose(criticalPressureRatio(1.4), 0.5283, 5e-5, 'critical ratio')
  })

  it('gives the choked mass flux of air at 200 kPa and 300 K (NASA Glenn Research Center, "Mass flow choking")', () => {
    const p0 = 200_000
    const T0 = 300
    const gamma = 1.4
    // ṁ/A = p0/√T0 · √(γ/R) · (2/(γ+1))^((γ+1)/(2(γ−1))), NASA Glenn's form, written out independently of the module.
    const nasa = (p0 / Math.sqrt(T0)) * Math.sqrt(gamma / AIR.gasConstant) * (2 / (gamma + 1)) ** ((gamma + 1) / (2 * (gamma - 1)))
    expectClose(nasa, 466.6, 0.1, 'NASA formula, kg/(s·m²)')
    expectClose(air(p0, 100_000), nasa, nasa * 1e-12, 'orifice at π = 0.5')
    expectClose(air(p0, 20_000), nasa, nasa * 1e-12, 'orifice at π = 0.1')
  })

  it('matches the subsonic formula between the critical ratio and the linear continuation', () => {
    const pi = 0.8
    // Ψ = √(2γ/(γ−1)·(π^(2/γ) − π^((γ+1)/γ))) (any compressible-flow text), evaluated by hand.
    const psi = Math.sqrt(7 * (pi ** (2 / 1.4) - pi ** (2.4 / 1.4)))
    expectClose(air(100_000, 80_000, 1e-6, 0.7), (0.7 * 1e-6 * 100_000 * psi) / Math.sqrt(AIR.gasConstant * 300), 1e-15)
  })

  it('reverses with the pressures and vanishes at equal pressures', () => {
    expectClose(air(150_000, 120_000), -air(120_000, 150_000), 1e-12)
    expect(air(150_000, 120_000)).toBeGreaterThan(0)
    expect(air(120_000, 120_000)).toBe(0)
  })

  it('is continuous where the linear continuation starts, and linear in Δp beyond it', () => {
    const f = flowFunctionFor(1.4)
    const edge = 1 - LINEAR_CONTINUATION_WIDTH
    expectClose(flowFunction(edge + 1e-13, f), flowFunction(edge - 1e-13, f), 1e-9, 'Ψ across the edge')
    const a = flowFunction(1 - 2e-5, f)
    const b = flowFunction(1 - 4e-5, f)
    expectClose(b / a, 2, 1e-9, 'linear next to π = 1')
    // The continuation's slope stays bounded: ≈ 141 for γ = 1.4 (√(2·1e-4)/1e-4, from Ψ ≈ √(2(1 − π)) near 1).
    expectClose(f.linearSlope, 141.4, 0.2, 'slope')
  })

  it('rejects a negative area, naming it', () => {
    expect(() => air(1e5, 1e5, -1)).toThrow(/areaM2/)
    expect(orificeFlowKgS(0, 2e5, 1e5, 290, flowFunctionFor(1.4))).toBe(0)
  })
})
