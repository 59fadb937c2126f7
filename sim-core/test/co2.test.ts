import { describe, expect, it } from 'vitest'
import {
  CO2_CRITICAL,
  CO2_GAS_CONSTANT,
  CO2_PENG_ROBINSON,
  co2BottlePressurePa,
  co2BottleState,
  co2GasDensityKgM3,
  co2GasMassPerLitreKg,
  co2PengRobinsonPressurePa,
  co2SaturatedLiquidDensityKgM3,
  co2SaturatedVapourDensityKgM3,
  co2SaturationPressurePa,
} from '../src/co2.ts'
import { PENG_ROBINSON } from '../src/peng-robinson.ts'
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

describe('Peng–Robinson for CO₂', () => {
  it('solves its critical conditions to the textbook constants Ω_a 0.45724, Ω_b 0.07780, Z_c 0.3074 (Peng & Robinson 1976)', () => {
    expectClose(PENG_ROBINSON.omegaA, 0.45724, 5e-6, 'Ω_a')
    expectClose(PENG_ROBINSON.omegaB, 0.0778, 5e-6, 'Ω_b')
    expectClose(PENG_ROBINSON.zc, 0.3074, 5e-5, 'Z_c')
  })

  const tc = CO2_PENG_ROBINSON.criticalTemperatureK
  const rhoC = (CO2_PENG_ROBINSON.criticalPressurePa * CO2_PENG_ROBINSON.molarMassKgPerMol) /
    (PENG_ROBINSON.zc * 8.314462618 * tc)

  it('passes through the critical point (304.13 K, 7.3773 MPa) with a flat critical isotherm', () => {
    expectClose(co2PengRobinsonPressurePa(rhoC, tc), 7.3773e6, 1e-3, 'p(T_c, ρ_c of PR), Pa')
    const h = 1
    const slope = (co2PengRobinsonPressurePa(rhoC + h, tc) - co2PengRobinsonPressurePa(rhoC - h, tc)) / (2 * h)
    // A flat isotherm: far below the ≈ 6000 Pa per kg/m³ of the 313 K isotherm at the same density.
    const away = (co2PengRobinsonPressurePa(rhoC + h, 313.15) - co2PengRobinsonPressurePa(rhoC - h, 313.15)) / (2 * h)
    expect(Math.abs(slope)).toBeLessThan(1e-3 * away)
  })

  it('meets the saturation curve at the critical point', () => {
    expectClose(co2PengRobinsonPressurePa(rhoC, tc), co2SaturationPressurePa(CO2_CRITICAL.temperatureK), 1e-3, 'Pa')
  })

  it('lies within 0.5 % of the saturation pressure on the saturated vapour between 0 and 30 °C', () => {
    for (const c of [0, 10, 20, 30]) {
      const t = celsius(c)
      const pr = co2PengRobinsonPressurePa(co2SaturatedVapourDensityKgM3(t), t)
      expectClose(pr / co2SaturationPressurePa(t), 1, 0.005, `PR/p_sat on ρ″ at ${c} °C`)
    }
  })

  it('tends to the ideal gas at low density', () => {
    const rho = 0.01
    expectClose(co2PengRobinsonPressurePa(rho, 300) / (rho * CO2_GAS_CONSTANT * 300), 1, 1e-4, 'Z at 0.01 kg/m³')
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
    const volume = s.liquidMassKg / co2SaturatedLiquidDensityKgM3(celsius(20)) +
      s.vapourMassKg / co2SaturatedVapourDensityKgM3(celsius(20))
    expectClose(volume, 0.0046, 1e-12, 'volume balance, m³')
    expect(s.liquidMassKg).toBeGreaterThan(s.vapourMassKg)
  })

  it('keeps the saturation pressure as liquid boils off, then falls as vapour once the liquid is gone', () => {
    const t = celsius(20)
    const rhoV = co2SaturatedVapourDensityKgM3(t)
    const last = co2BottleState({ volumeM3: 0.0046, massKg: 0.0046 * rhoV * 1.01, temperatureK: t })
    expect(last.phase).toBe('two-phase')
    expectClose(last.pressurePa, co2SaturationPressurePa(t), 1e-6, 'pressure with a little liquid, Pa')
    const empty = co2BottleState({ volumeM3: 0.0046, massKg: 0.0046 * rhoV * 0.5, temperatureK: t })
    expect(empty.phase).toBe('gas')
    expect(empty.liquidMassKg).toBe(0)
    expect(empty.pressurePa).toBeLessThan(co2SaturationPressurePa(t))
    expect(empty.pressurePa).toBeGreaterThan(0.5 * co2SaturationPressurePa(t))
  })

  it('goes supercritical above 304.13 K with a warning that pressure rises fast with temperature', () => {
    const s = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(45) })
    expect(s.phase).toBe('supercritical')
    expect(s.liquidMassKg).toBe(0)
    expect(s.pressurePa).toBeGreaterThan(CO2_CRITICAL.pressurePa)
    expect(s.warning).toMatch(/rises fast with temperature/)
    expect(s.warning).toMatch(/burst disc/)
    const hotter = co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(55) })
    expect(hotter.pressurePa - s.pressurePa).toBeGreaterThan(1.5 * MPA)
  })

  it('is continuous across the critical temperature at the critical fill density', () => {
    const fill = { volumeM3: 0.001, massKg: 0.4676 }
    const below = co2BottleState({ ...fill, temperatureK: 304.12 })
    const above = co2BottleState({ ...fill, temperatureK: 304.14 })
    expect(below.phase).toBe('two-phase')
    expect(above.phase).toBe('supercritical')
    expectClose(above.pressurePa / below.pressurePa, 1, 0.003, 'pressure ratio across T_c')
  })

  it('flags an overfilled bottle that the liquid fills completely', () => {
    // 0.74 kg/L at 25 °C is denser than the saturated liquid there (710 kg/m³).
    const s = co2BottleState({ volumeM3: 0.001, massKg: 0.74, temperatureK: celsius(25) })
    expect(s.phase).toBe('liquid-full')
    expect(s.vapourMassKg).toBe(0)
    expect(s.pressurePa).toBeGreaterThanOrEqual(co2SaturationPressurePa(celsius(25)))
    expect(s.warning).toMatch(/full of liquid/)
  })

  it('gives the same pressure through the pressure-only path in every phase', () => {
    const cases = [
      { volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(20) },
      { volumeM3: 0.0046, massKg: 0.012, temperatureK: celsius(20) },
      { volumeM3: 0.001, massKg: 0.74, temperatureK: celsius(25) },
      { volumeM3: 0.0046, massKg: 2.27, temperatureK: celsius(45) },
    ]
    expect(cases.map((c) => co2BottleState(c).phase)).toEqual(['two-phase', 'gas', 'liquid-full', 'supercritical'])
    for (const c of cases) expect(co2BottlePressurePa(c)).toBe(co2BottleState(c).pressurePa)
  })

  it('refuses a bottle below the triple point and non-positive inputs, naming them', () => {
    expect(() => co2BottleState({ volumeM3: 0.0046, massKg: 2.27, temperatureK: 200 })).toThrow(/200 K/)
    expect(() => co2BottleState({ volumeM3: 0, massKg: 2.27, temperatureK: 300 })).toThrow(/volumeM3/)
    expect(() => co2BottleState({ volumeM3: 0.0046, massKg: -1, temperatureK: 300 })).toThrow(/massKg/)
    // 1.5 kg/L is denser than liquid CO₂ at its triple point (about 1178 kg/m³, Span & Wagner eq. 3.14).
    expect(() => co2BottleState({ volumeM3: 0.001, massKg: 1.5, temperatureK: 300 })).toThrow(/cannot fit/)
  })
})

describe('CO₂ gas in a chamber (Peng–Robinson)', () => {
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

  it('round-trips with the pressure equation', () => {
    for (const [p, t] of [[500_000, 280], [3e6, 350], [1.2e6, 300]] as const) {
      expectClose(co2PengRobinsonPressurePa(co2GasDensityKgM3(p, t), t), p, 1e-6 * p, `p at ${p} Pa, ${t} K`)
    }
  })

  it('gives grams per litre of chamber', () => {
    expectClose(co2GasMassPerLitreKg(101_325, 273.15) * 1000, 1.977, 0.003, 'g per litre at STP')
  })

  it('refuses a pressure at which CO₂ would be liquid', () => {
    expect(() => co2GasDensityKgM3(6e6, celsius(20))).toThrow(/would be liquid/)
  })
})
