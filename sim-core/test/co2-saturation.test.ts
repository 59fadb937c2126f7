import { describe, expect, it } from 'vitest'
import { CO2_SPAN_WAGNER, co2EosGibbsEnergyJPerKg, co2EosPressurePa } from '../src/co2-helmholtz.ts'
import { co2EosSaturation } from '../src/co2-saturation.ts'
import { co2SaturatedLiquidDensityKgM3, co2SaturatedVapourDensityKgM3, co2SaturationPressurePa } from '../src/co2.ts'
import { expectClose } from './expect-close.ts'

const celsius = (c: number) => c + 273.15
const MPA = 1e6
const TC = CO2_SPAN_WAGNER.criticalTemperatureK

describe('CO₂ saturation solved from the equation of state', () => {
  // NIST Chemistry WebBook, carbon dioxide saturation table (Span & Wagner reference equation).
  const webBook: [number, number][] = [
    [0, 3.4851],
    [10, 4.5022],
    [20, 5.7291],
    [30, 7.2137],
  ]
  for (const [c, mpa] of webBook) {
    it(`gives ${mpa} MPa at ${c} °C within 0.05 % (NIST Chemistry WebBook)`, () => {
      expectClose(co2EosSaturation(celsius(c)).pressurePa / (mpa * MPA), 1, 5e-4, `p_sat at ${c} °C / WebBook`)
    })
  }

  it('gives the saturated densities at 0 °C: v_f 0.001078, v_g 0.010241 m³/kg (Ohio University R744 table, from the NIST WebBook)', () => {
    const s = co2EosSaturation(celsius(0))
    // Four printed figures: ±0.05 % on the liquid.
    expectClose(s.liquidDensityKgM3, 1 / 0.001078, 0.5, 'ρ′ at 0 °C, kg/m³')
    expectClose(s.vapourDensityKgM3, 1 / 0.010241, 0.05, 'ρ″ at 0 °C, kg/m³')
  })

  it('gives the saturated densities at 25 °C: 710.5 and 242.73 kg/m³ (CoolProp 6.6 tabulated by processconvert, R-744)', () => {
    const s = co2EosSaturation(celsius(25))
    expectClose(s.liquidDensityKgM3, 710.5, 0.1, 'ρ′ at 25 °C, kg/m³')
    expectClose(s.vapourDensityKgM3, 242.73, 0.02, 'ρ″ at 25 °C, kg/m³')
  })

  // Span & Wagner 1996, Table 34 (saturation states), as transcribed in the test suite of equinor/open_petro_elastic
  // (tests/test_span_wagner.py). [T K, p MPa, ρ′ kg/m³, ρ″ kg/m³]
  const table34: [number, number, number, number][] = [
    [216.592, 0.51796, 1178.46, 13.761],
    [240, 1.2825, 1088.87, 33.295],
    [260, 2.4188, 998.89, 64.417],
    [280, 4.1607, 883.58, 121.74],
    [290, 5.3177, 804.67, 171.96],
    [300, 6.7131, 679.24, 268.58],
    [303, 7.189, 599.86, 339.0],
    [304, 7.3555, 530.3, 406.42],
  ]
  for (const [t, mpa, liquid, vapour] of table34) {
    it(`gives ${mpa} MPa, ${liquid} and ${vapour} kg/m³ at ${t} K (Span & Wagner 1996, Table 34)`, () => {
      const s = co2EosSaturation(t)
      // The table's last printed figure: at most 0.01 % of each value.
      expectClose(s.pressurePa / (mpa * MPA), 1, 1e-4, `p_sat/p_table at ${t} K`)
      expectClose(s.liquidDensityKgM3 / liquid, 1, 1e-4, `ρ′/ρ′_table at ${t} K`)
      expectClose(s.vapourDensityKgM3 / vapour, 1, 1e-4, `ρ″/ρ″_table at ${t} K`)
    })
  }

  it('meets the saturation conditions: equal pressure and equal Gibbs energy of both phases to 1e-8', () => {
    for (let t = 217; t < TC; t += 1.5) {
      const s = co2EosSaturation(t)
      const liquidPa = co2EosPressurePa(s.liquidDensityKgM3, t)
      const vapourPa = co2EosPressurePa(s.vapourDensityKgM3, t)
      expectClose(liquidPa / s.pressurePa, 1, 1e-8, `p(ρ′)/p_sat at ${t} K`)
      expectClose(vapourPa / s.pressurePa, 1, 1e-8, `p(ρ″)/p_sat at ${t} K`)
      // Gibbs energy relative to R·T, its natural scale (its zero is the paper's reference state).
      const rt = CO2_SPAN_WAGNER.gasConstantJPerKgK * t
      const dg = co2EosGibbsEnergyJPerKg(s.liquidDensityKgM3, t) - co2EosGibbsEnergyJPerKg(s.vapourDensityKgM3, t)
      expect(Math.abs(dg) / rt, `(g′ − g″)/(R·T) at ${t} K`).toBeLessThanOrEqual(1e-8)
      expect(s.liquidDensityKgM3).toBeGreaterThan(s.vapourDensityKgM3)
    }
  })

  it('agrees with the ancillary equations within 0.05 % in pressure and 0.5 % in density, triple point to 304 K', () => {
    for (let t = 216.6; t <= 304; t += 0.25) {
      const s = co2EosSaturation(t)
      expectClose(s.pressurePa / co2SaturationPressurePa(t), 1, 5e-4, `p_sat / ancillary at ${t} K`)
      expectClose(s.liquidDensityKgM3 / co2SaturatedLiquidDensityKgM3(t), 1, 5e-3, `ρ′ / ancillary at ${t} K`)
      expectClose(s.vapourDensityKgM3 / co2SaturatedVapourDensityKgM3(t), 1, 5e-3, `ρ″ / ancillary at ${t} K`)
    }
  })

  it('closes on the critical point continuously, within a millionth of a kelvin of T_c too', () => {
    const pc = co2EosPressurePa(467.6, TC)
    let previous = co2EosSaturation(TC - 0.01)
    for (const below of [1e-3, 1e-4, 1e-5, 3e-6, 1e-6, 1e-7, 1e-9, 0]) {
      const s = co2EosSaturation(TC - below)
      expect(s.pressurePa, `p_sat ${below} K below T_c`).toBeGreaterThan(previous.pressurePa - 1e-6)
      expect(s.liquidDensityKgM3).toBeLessThanOrEqual(previous.liquidDensityKgM3)
      expect(s.vapourDensityKgM3).toBeGreaterThanOrEqual(previous.vapourDensityKgM3)
      // The saturation curve's slope near T_c is about 0.17 MPa/K.
      expectClose(s.pressurePa, pc, 0.2e6 * below + 1e-3, `p_sat ${below} K below T_c against p(ρ_c, T_c), Pa`)
      previous = s
    }
    expect(previous.liquidDensityKgM3).toBe(467.6)
    expect(previous.vapourDensityKgM3).toBe(467.6)
  })

  it('refuses temperatures outside the triple point to the critical point, naming the temperature', () => {
    expect(() => co2EosSaturation(305)).toThrow(RangeError)
    expect(() => co2EosSaturation(305)).toThrow(/305 K/)
    expect(() => co2EosSaturation(210)).toThrow(/210 K/)
    expect(() => co2EosSaturation(Number.NaN)).toThrow(RangeError)
  })
})
