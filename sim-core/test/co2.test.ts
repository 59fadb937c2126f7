import { describe, expect, it } from 'vitest'
import {
  CO2_BURST_DISC_WARNING_FRACTION,
  CO2_CRITICAL,
  CO2_GAS_CONSTANT,
  CO2_TYPICAL_BURST_DISC_GAUGE_PA,
  co2BottlePressureFunction,
  co2BottlePressurePa,
  co2BottleState,
  co2EosPressurePa,
  co2EosSaturation,
  co2GasDensityKgM3,
  co2GasMassPerLitreKg,
  co2SaturatedLiquidDensityKgM3,
  co2SaturatedVapourDensityKgM3,
  co2SaturationPressurePa,
} from '../src/co2.ts'
import { expectClose } from './expect-close.ts'

const celsius = (c: number) => c + 273.15
const MPA = 1e6

describe('CO₂ saturation pressure (Span & Wagner ancillary equation)', () => {
  // NIST Chemistry WebBook, carbon dioxide saturation table (Span & Wagner reference equation); the
  // tolerance is the last printed digit plus the ancillary's own scatter (Span & Wagner quote ≤ 0.01 %).
  const webBook: [number, number][] = [
    [0, 3.4851],
    [10, 4.5022],
    [20, 5.7291],
    [30, 7.2137],
  ]
  for (const [c, mpa] of webBook) {
    it(`gives ${mpa} MPa at ${c} °C (NIST Chemistry WebBook)`, () => {
      expectClose(co2SaturationPressurePa(celsius(c)) / MPA, mpa, 0.0005, `p_sat at ${c} °C, MPa`)
    })
  }

  it('reaches the critical pressure 7.3773 MPa at the critical temperature (Span & Wagner 1996)', () => {
    expectClose(co2SaturationPressurePa(304.1282), 7.3773e6, 1e-6, 'p_sat(T_c), Pa')
    // 304.13 K, the rounded T_c of the WebBook, is 0.0018 K past the ancillary's end.
    expectClose(co2SaturationPressurePa(304.128) / MPA, 7.3773, 0.0001, 'p_sat just below T_c, MPa')
  })

  it('gives 1.9696 MPa at −20 °C (NIST WebBook data as tabulated by Ohio University, R744 saturation table)', () => {
    expectClose(co2SaturationPressurePa(celsius(-20)) / MPA, 1.9696, 0.0005, 'p_sat at −20 °C, MPa')
  })

  it('refuses temperatures outside the triple point to the critical point, naming the temperature', () => {
    expect(() => co2SaturationPressurePa(305)).toThrow(RangeError)
    expect(() => co2SaturationPressurePa(305)).toThrow(/305 K/)
    expect(() => co2SaturationPressurePa(210)).toThrow(/210 K/)
    expect(() => co2SaturationPressurePa(Number.NaN)).toThrow(RangeError)
    expect(co2SaturationPressurePa(216.592)).toBeGreaterThan(0.5e6)
  })
})

describe('CO₂ saturated densities (Span & Wagner ancillary equations)', () => {
  it('match the WebBook at 0 °C: v_f 0.001078, v_g 0.010241 m³/kg (Ohio University R744 table, from the NIST WebBook)', () => {
    // The table prints specific volumes to four significant figures: ±0.05 % on the liquid.
    expectClose(co2SaturatedLiquidDensityKgM3(celsius(0)), 1 / 0.001078, 0.5, 'ρ′ at 0 °C, kg/m³')
    expectClose(co2SaturatedVapourDensityKgM3(celsius(0)), 1 / 0.010241, 0.05, 'ρ″ at 0 °C, kg/m³')
  })

  it('match the reference equation at 25 °C: 710.5 and 242.73 kg/m³ (CoolProp 6.6 tabulated by processconvert, R-744)', () => {
    expectClose(co2SaturatedLiquidDensityKgM3(celsius(25)), 710.5, 0.3, 'ρ′ at 25 °C, kg/m³')
    expectClose(co2SaturatedVapourDensityKgM3(celsius(25)), 242.73, 0.1, 'ρ″ at 25 °C, kg/m³')
  })

  it('meet at the critical density 467.6 kg/m³ (Span & Wagner 1996)', () => {
    expectClose(co2SaturatedLiquidDensityKgM3(CO2_CRITICAL.temperatureK), 467.6, 1e-9, 'ρ′(T_c)')
    expectClose(co2SaturatedVapourDensityKgM3(CO2_CRITICAL.temperatureK), 467.6, 1e-9, 'ρ″(T_c)')
  })
})


describe('co2BottleState', () => {
  it('holds a part-full bottle at the saturation pressure and splits liquid from vapour by volume', () => {
    // A 4.6 L bottle holding 2.27 kg (about 5 lb) at 20 °C.
    const s = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(20) })
    expect(s.phase).toBe('two-phase')
    expect(s.warning).toBeUndefined()
    expectClose(s.pressurePa / MPA, 5.7291, 0.0005, 'pressure, MPa (NIST WebBook at 20 °C)')
    expectClose(s.liquidMassKg + s.vapourMassKg, 2.27, 1e-12, 'mass balance, kg')
    const saturated = co2EosSaturation(celsius(20))
    const volume = s.liquidMassKg / saturated.liquidDensityKgM3 + s.vapourMassKg / saturated.vapourDensityKgM3
    expectClose(volume, 0.0046, 1e-12, 'volume balance, m³')
    expect(s.liquidMassKg).toBeGreaterThan(s.vapourMassKg)
  })

  it('keeps the saturation pressure as liquid boils off, then falls as vapour once the liquid is gone', () => {
    const t = celsius(20)
    const saturated = co2EosSaturation(t)
    const last = co2BottleState({ volumeM3: 0.0046, massKg: 0.0046 * saturated.vapourDensityKgM3 * 1.01, temperatureK: t })
    expect(last.phase).toBe('two-phase')
    expect(last.pressurePa).toBe(saturated.pressurePa)
    const empty = co2BottleState({ volumeM3: 0.0046, massKg: 0.0046 * saturated.vapourDensityKgM3 * 0.5, temperatureK: t })
    expect(empty.phase).toBe('gas')
    expect(empty.liquidMassKg).toBe(0)
    expect(empty.pressurePa).toBeLessThan(saturated.pressurePa)
    expect(empty.pressurePa).toBeGreaterThan(0.5 * saturated.pressurePa)
  })

  it('takes the saturation pressure from the equation of state, within 0.005 % of the ancillary equation', () => {
    for (const c of [-40, -20, 0, 10, 20, 25, 30]) {
      const s = co2BottleState({ volumeM3: 0.001, massKg: 0.5, temperatureK: celsius(c) })
      expect(s.phase).toBe('two-phase')
      expect(s.pressurePa).toBe(co2EosSaturation(celsius(c)).pressurePa)
      expectClose(s.pressurePa / co2SaturationPressurePa(celsius(c)), 1, 5e-5, `p_sat EOS/ancillary at ${c} °C`)
    }
  })

  it('goes supercritical above 304.13 K with a warning that pressure rises fast with temperature', () => {
    const s = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(45) })
    expect(s.phase).toBe('supercritical')
    expect(s.liquidMassKg).toBe(0)
    expect(s.pressurePa).toBeGreaterThan(CO2_CRITICAL.pressurePa)
    expect(s.pressurePa).toBe(co2EosPressurePa(2.27 / 0.0046, celsius(45)))
    expect(s.warning).toMatch(/rises fast with temperature/)
    expect(s.warning).toMatch(/burst disc/)
    const hotter = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(55) })
    expect(hotter.pressurePa - s.pressurePa).toBeGreaterThan(1.5 * MPA)
    // The rise the warning quotes is the equation's over the next 10 K.
    const rise = (co2EosPressurePa(2.27 / 0.0046, celsius(55)) - s.pressurePa) / MPA
    expect(s.warning).toContain(`about ${rise.toFixed(1)} MPa per further 10 K`)
  })

  it('is continuous across the critical temperature at the critical fill density', () => {
    const fill = { volumeM3: 0.001, massKg: 0.4676 }
    const below = co2BottleState({ ...fill, temperatureK: 304.12 })
    const above = co2BottleState({ ...fill, temperatureK: 304.14 })
    expect(below.phase).toBe('two-phase')
    expect(above.phase).toBe('supercritical')
    // 0.02 K on the saturation curve's 0.17 MPa/K: about 3.4 kPa, 0.05 %.
    expectClose(above.pressurePa / below.pressurePa, 1, 6e-4, 'pressure ratio across T_c')
  })

  it('flags an overfilled bottle that the liquid fills completely, with its pressure rise per kelvin', () => {
    // 0.74 kg/L at 25 °C is denser than the saturated liquid there (710.5 kg/m³).
    const s = co2BottleState({ volumeM3: 0.001, massKg: 0.74, temperatureK: celsius(25) })
    expect(s.phase).toBe('liquid-full')
    expect(s.vapourMassKg).toBe(0)
    expect(s.pressurePa).toBeGreaterThan(co2EosSaturation(celsius(25)).pressurePa)
    expect(s.warning).toMatch(/full of liquid/)
    const slope = (co2EosPressurePa(740, celsius(25) + 0.5) - co2EosPressurePa(740, celsius(25) - 0.5)) / MPA
    expect(s.warning).toContain(`about ${slope.toFixed(2)} MPa per K at this fill`)
    expect(s.warning).toMatch(/above the usual filling limit of 0\.68 kg\/L/)
  })

  it('gives the same pressure through the pressure-only paths in every phase', () => {
    const cases = [
      { volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(20) },
      { volumeM3: 0.0046, massKg: 0.012, temperatureK: celsius(20) },
      { volumeM3: 0.001, massKg: 0.74, temperatureK: celsius(25) },
      { volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(45) },
    ]
    expect(cases.map((c) => co2BottleState(c).phase)).toEqual(['two-phase', 'gas', 'liquid-full', 'supercritical'])
    for (const c of cases) {
      expect(co2BottlePressurePa(c)).toBe(co2BottleState(c).pressurePa)
      expect(co2BottlePressureFunction(c.volumeM3, c.temperatureK)(c.massKg)).toBe(co2BottleState(c).pressurePa)
    }
  })

  it('puts a fill at exactly a saturated density in the same phase with the same pressure on every path', () => {
    const t = celsius(15)
    const s = co2EosSaturation(t)
    for (const rho of [s.vapourDensityKgM3, s.liquidDensityKgM3]) {
      const input = { volumeM3: 1, massKg: rho, temperatureK: t }
      const state = co2BottleState(input)
      expect(state.phase).not.toBe('two-phase')
      expect(co2BottlePressurePa(input)).toBe(state.pressurePa)
      expect(co2BottlePressureFunction(1, t)(rho)).toBe(state.pressurePa)
      expectClose(state.pressurePa / s.pressurePa, 1, 1e-9, 'p at a saturated density / p_sat')
    }
  })

  it('refuses a bottle below the triple point and non-positive inputs, naming them', () => {
    expect(() => co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: 200 })).toThrow(/200 K/)
    expect(() => co2BottleState({ volumeM3: 0, massKg: 2.27, temperatureK: 300 })).toThrow(/volumeM3/)
    expect(() => co2BottleState({ volumeM3: 0.0046, massKg: -1, temperatureK: 300 })).toThrow(/massKg/)
    expect(() => co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: Number.NaN })).toThrow(/temperatureK/)
    // 1.5 kg/L is denser than liquid CO₂ at its triple point (about 1178 kg/m³, Span & Wagner eq. 3.14).
    expect(() => co2BottleState({ volumeM3: 0.001, massKg: 1.5, temperatureK: 300 })).toThrow(/cannot fit/)
    expect(() => co2BottlePressureFunction(0.001, 300)(1.5)).toThrow(/cannot fit/)
    expect(() => co2BottlePressureFunction(0.001, 300)(0)).toThrow(/massKg/)
    expect(() => co2BottlePressureFunction(-1, 300)).toThrow(/volumeM3/)
    expect(() => co2BottlePressureFunction(0.001, 150)).toThrow(/150 K/)
  })
})

describe('co2BottleState warnings', () => {
  const normal = (temperatureK: number) => co2BottleState({ volumeM3: 0.001, massKg: 0.68, temperatureK })

  it('gives none for a normally filled bottle (0.68 kg/L) at 20 °C, nor at exactly 0.68 kg/L', () => {
    expect(normal(celsius(20)).warning).toBeUndefined()
    expect(normal(celsius(20)).phase).toBe('two-phase')
    // 6.8 L holding 4.624 kg: 0.68 kg/L in numbers that do not divide exactly in binary.
    expect(co2BottleState({ volumeM3: 0.0068, massKg: 4.624, temperatureK: celsius(20) }).warning).toBeUndefined()
  })

  it('flags a fill above 0.68 kg/L as common practice, and says when the liquid fills the bottle', () => {
    const s = co2BottleState({ volumeM3: 0.001, massKg: 0.7, temperatureK: celsius(20) })
    expect(s.phase).toBe('two-phase')
    expect(s.warning).toMatch(/common practice; many codes cap CO₂ filling at about 0\.68 kg\/L/)
    // ρ′ falls through 700 kg/m³ between 298 K (712.77) and 300 K (679.24) (Span & Wagner 1996, Table 34).
    const from = Number(/full of liquid from about (-?[\d.]+) °C/.exec(s.warning ?? '')?.[1])
    expect(from).toBeGreaterThan(298 - 273.15)
    expect(from).toBeLessThan(300 - 273.15)
    expect(s.warning).toMatch(/bottle maker's rating/)
    expect(s.warning).toMatch(/local codes/)
  })

  it('flags a normally filled bottle once the liquid fills it, near 27 °C, with the rise per kelvin', () => {
    expect(normal(celsius(26)).phase).toBe('two-phase')
    expect(normal(celsius(26)).warning).toBeUndefined()
    const full = normal(celsius(28))
    expect(full.phase).toBe('liquid-full')
    expect(full.warning).toMatch(/full of liquid/)
    expect(full.warning).toMatch(/MPa per K at this fill/)
    expect(full.warning).not.toMatch(/filling limit/)
  })

  it('warns near a typical burst-disc rating (3000 psi, common practice) and above it', () => {
    expectClose(CO2_TYPICAL_BURST_DISC_GAUGE_PA / MPA, 20.684, 0.001, 'typical burst-disc rating, MPa gauge (3000 psi)')
    expect(normal(320).warning).not.toMatch(/burst-disc rating/)
    const near = normal(340)
    const gauge = near.pressurePa - 101_325
    expect(gauge).toBeGreaterThan(CO2_BURST_DISC_WARNING_FRACTION * CO2_TYPICAL_BURST_DISC_GAUGE_PA)
    expect(gauge).toBeLessThan(CO2_TYPICAL_BURST_DISC_GAUGE_PA)
    expect(near.warning).toMatch(/% of a typical burst-disc rating of 20\.7 MPa \(3000 psi\)/)
    expect(near.warning).toMatch(/common practice, no source/)
    expect(near.warning).toMatch(/bottle maker's rating/)
    const over = normal(350)
    expect(over.pressurePa - 101_325).toBeGreaterThan(CO2_TYPICAL_BURST_DISC_GAUGE_PA)
    expect(over.warning).toMatch(/is above a typical burst-disc rating/)
  })

  it('warns about a cold overfilled bottle full of compressed liquid', () => {
    // 1.05 kg/L at 260 K: a compressed liquid, denser than the saturated liquid there (998.9 kg/m³).
    const s = co2BottleState({ volumeM3: 0.001, massKg: 1.05, temperatureK: 260 })
    expect(s.phase).toBe('liquid-full')
    expect(s.warning).toMatch(/full of liquid/)
    expect(s.warning).toMatch(/filling limit/)
  })
})

describe('CO₂ gas in a chamber (equation of state)', () => {
  it('gives the standard density 1.977 kg/m³ at 0 °C and 101.325 kPa (Messer, "Properties of Carbon Dioxide")', () => {
    expectClose(co2GasDensityKgM3(101_325, 273.15), 1.977, 0.003, 'kg/m³')
  })

  it('is denser than the ideal gas at a regulator pressure, by the compressibility of CO₂', () => {
    const p = 2e6 + 101_325
    const t = 298.15
    const z = p / (co2GasDensityKgM3(p, t) * CO2_GAS_CONSTANT * t)
    // Z of CO₂ near 2 MPa and 25 °C is about 0.88 (generalised compressibility charts; from memory).
    expectClose(z, 0.88, 0.02, 'compressibility factor')
  })

  // Span & Wagner 1996, Table 35, as transcribed in the test suite of equinor/open_petro_elastic.
  const table35: [number, number, number][] = [
    [240, 1, 24.857],
    [280, 1, 20.199],
    [300, 1, 18.579],
    [320, 10, 448.28],
    [340, 10, 258.62],
    [280, 0.5, 9.7568],
  ]
  for (const [t, mpa, rho] of table35) {
    it(`gives ${rho} kg/m³ at ${mpa} MPa and ${t} K (Span & Wagner 1996, Table 35)`, () => {
      expectClose(co2GasDensityKgM3(mpa * MPA, t) / rho, 1, 5e-4, `ρ/ρ_table at ${t} K, ${mpa} MPa`)
    })
  }

  it('round-trips with the pressure equation', () => {
    for (const [p, t] of [[500_000, 280], [3e6, 350], [1.2e6, 300], [7.3e6, 304.2], [20e6, 310], [4e6, 279.9]] as const) {
      expectClose(co2EosPressurePa(co2GasDensityKgM3(p, t), t), p, 1e-9 * p, `p at ${p} Pa, ${t} K`)
    }
  })

  it('finds the vapour right up to saturation', () => {
    const s = co2EosSaturation(celsius(20))
    expectClose(co2GasDensityKgM3(s.pressurePa, celsius(20)) / s.vapourDensityKgM3, 1, 1e-9, 'ρ at p_sat / ρ″')
  })

  it('gives grams per litre of chamber', () => {
    expectClose(co2GasMassPerLitreKg(101_325, 273.15) * 1000, 1.977, 0.003, 'g per litre at STP')
  })

  it('refuses a pressure at which CO₂ would be liquid, and bad input, naming it', () => {
    expect(() => co2GasDensityKgM3(6e6, celsius(20))).toThrow(/would be liquid/)
    expect(() => co2GasDensityKgM3(0, 300)).toThrow(/pressurePa/)
    expect(() => co2GasDensityKgM3(1e6, 200)).toThrow(/triple point/)
    expect(() => co2GasDensityKgM3(1e9, 350)).toThrow(/800 MPa/)
  })
})
