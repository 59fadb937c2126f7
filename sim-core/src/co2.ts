import { MOLAR_GAS_CONSTANT, pengRobinsonGasDensityKgM3, pengRobinsonPressurePa, type CubicFluid } from './peng-robinson.ts'

/**
 * Carbon dioxide for the bottle that feeds a top port (MODEL.md §4 supplies, §4a). SI throughout; pressures
 * are absolute.
 *
 * Below the critical temperature a bottle holding liquid sits at the saturation pressure, from the ancillary
 * equations of Span & Wagner (J. Phys. Chem. Ref. Data 25, 1509, 1996, eqs. 3.13–3.15). Where there is no
 * liquid — a nearly empty bottle, or one above 30.98 °C, which a hot car reaches — the pressure comes from
 * the fill density and temperature through Peng–Robinson.
 */

/** Critical point of the Span & Wagner equations: T_c 304.1282 K, p_c 7.3773 MPa, ρ_c 467.6 kg/m³. */
export const CO2_CRITICAL = Object.freeze({ temperatureK: 304.1282, pressurePa: 7.3773e6, densityKgM3: 467.6 })
/** Triple point, 216.592 K (Span & Wagner 1996); below it CO₂ is solid and the ancillaries do not apply. */
export const CO2_TRIPLE_POINT_K = 216.592
/** 44.0095 g/mol (IUPAC atomic weights). */
export const CO2_MOLAR_MASS_KG_PER_MOL = 0.0440095
/** Specific gas constant, 188.92 J/(kg·K). */
export const CO2_GAS_CONSTANT = MOLAR_GAS_CONSTANT / CO2_MOLAR_MASS_KG_PER_MOL

/** CO₂ for Peng–Robinson: T_c 304.13 K, p_c 7.3773 MPa, ω 0.2239 (MODEL.md §4a). */
export const CO2_PENG_ROBINSON: CubicFluid = Object.freeze({
  criticalTemperatureK: 304.13,
  criticalPressurePa: 7.3773e6,
  acentricFactor: 0.2239,
  molarMassKgPerMol: CO2_MOLAR_MASS_KG_PER_MOL,
})

const VAPOUR_PRESSURE = [
  [-7.0602087, 1],
  [1.9391218, 1.5],
  [-1.6463597, 2],
  [-3.2995634, 4],
] as const
const LIQUID_DENSITY = [
  [1.9245108, 0.34],
  [-0.62385555, 0.5],
  [-0.32731127, 10 / 6],
  [0.39245142, 11 / 6],
] as const
const VAPOUR_DENSITY = [
  [-1.7074879, 0.34],
  [-0.8227467, 0.5],
  [-4.6008549, 1],
  [-10.111178, 7 / 3],
  [-29.742252, 14 / 3],
] as const

const series = (terms: readonly (readonly [number, number])[], tau: number): number =>
  terms.reduce((sum, [a, t]) => sum + a * tau ** t, 0)

function requireSaturationRange(temperatureK: number): number {
  if (!(temperatureK >= CO2_TRIPLE_POINT_K && temperatureK <= CO2_CRITICAL.temperatureK)) {
    throw new RangeError(
      `CO₂ has no liquid–vapour saturation at ${temperatureK} K: the saturation equations hold from the triple point ` +
        `${CO2_TRIPLE_POINT_K} K to the critical point ${CO2_CRITICAL.temperatureK} K`,
    )
  }
  return 1 - temperatureK / CO2_CRITICAL.temperatureK
}

/** Saturation (vapour) pressure, Pa absolute: ln(p/p_c) = (T_c/T)·Σ aᵢ(1 − T/T_c)^tᵢ (Span & Wagner eq. 3.13). */
export function co2SaturationPressurePa(temperatureK: number): number {
  const tau = requireSaturationRange(temperatureK)
  return CO2_CRITICAL.pressurePa * Math.exp((CO2_CRITICAL.temperatureK / temperatureK) * series(VAPOUR_PRESSURE, tau))
}

/** Saturated liquid density ρ′, kg/m³: ln(ρ′/ρ_c) = Σ aᵢ(1 − T/T_c)^tᵢ (Span & Wagner eq. 3.14). */
export function co2SaturatedLiquidDensityKgM3(temperatureK: number): number {
  const tau = requireSaturationRange(temperatureK)
  return CO2_CRITICAL.densityKgM3 * Math.exp(series(LIQUID_DENSITY, tau))
}

/** Saturated vapour density ρ″, kg/m³: ln(ρ″/ρ_c) = Σ aᵢ(1 − T/T_c)^tᵢ (Span & Wagner eq. 3.15). */
export function co2SaturatedVapourDensityKgM3(temperatureK: number): number {
  const tau = requireSaturationRange(temperatureK)
  return CO2_CRITICAL.densityKgM3 * Math.exp(series(VAPOUR_DENSITY, tau))
}

/** Peng–Robinson pressure of CO₂, Pa absolute, at a density and temperature. */
export function co2PengRobinsonPressurePa(densityKgM3: number, temperatureK: number): number {
  return pengRobinsonPressurePa(CO2_PENG_ROBINSON, densityKgM3, temperatureK)
}

export type Co2Phase = 'two-phase' | 'gas' | 'supercritical' | 'liquid-full'

export interface Co2BottleInput {
  /** Internal (water) volume of the bottle. */
  volumeM3: number
  /** CO₂ in the bottle. */
  massKg: number
  temperatureK: number
}

export interface Co2BottleState {
  /** Absolute. */
  pressurePa: number
  liquidMassKg: number
  /** Vapour, or the whole single-phase fill above the critical temperature. */
  vapourMassKg: number
  phase: Co2Phase
  /** Fill density, kg/m³. */
  fillDensityKgM3: number
  /** A safety note for the user when the bottle is in a state that needs one. */
  warning?: string
}

const MPA = 1e6
const fmt = (x: number, places: number) => x.toFixed(places)

/**
 * Liquid CO₂ is densest at its triple point (Span & Wagner eq. 3.14 there, about 1178 kg/m³): no bottle can hold
 * more than this per cubic metre, whatever its temperature.
 */
export const CO2_DENSEST_LIQUID_KG_M3 = co2SaturatedLiquidDensityKgM3(CO2_TRIPLE_POINT_K)

/** The rise of bottle pressure over the next 10 K at the fill density, for the warning. */
function riseOver10K(densityKgM3: number, temperatureK: number): number {
  return co2PengRobinsonPressurePa(densityKgM3, temperatureK + 10) - co2PengRobinsonPressurePa(densityKgM3, temperatureK)
}

interface Phase {
  phase: Co2Phase
  pressurePa: number
  fillDensityKgM3: number
  /** Saturated densities (below T_c only). */
  liquidKgM3: number
  vapourKgM3: number
}

function checkBottle({ volumeM3, massKg, temperatureK }: Co2BottleInput): number {
  for (const [name, value] of [['volumeM3', volumeM3], ['massKg', massKg], ['temperatureK', temperatureK]] as const) {
    if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number, got ${value}`)
  }
  if (temperatureK < CO2_TRIPLE_POINT_K) {
    throw new RangeError(`a CO₂ bottle at ${temperatureK} K is below the triple point ${CO2_TRIPLE_POINT_K} K (solid CO₂)`)
  }
  const rho = massKg / volumeM3
  if (rho > CO2_DENSEST_LIQUID_KG_M3) {
    throw new RangeError(
      `${massKg} kg of CO₂ cannot fit in ${volumeM3 * 1000} L: ${fmt(rho, 0)} kg/m³ is denser than liquid CO₂ ever is ` +
        `(${fmt(CO2_DENSEST_LIQUID_KG_M3, 0)} kg/m³ at the triple point)`,
    )
  }
  return rho
}

/** Phase and pressure of a checked fill density (see co2BottleState). */
function phaseOf(rho: number, temperatureK: number): Phase {
  if (temperatureK >= CO2_CRITICAL.temperatureK) {
    const pressurePa = co2PengRobinsonPressurePa(rho, temperatureK)
    return { phase: 'supercritical', pressurePa, fillDensityKgM3: rho, liquidKgM3: Number.NaN, vapourKgM3: Number.NaN }
  }
  const pSat = co2SaturationPressurePa(temperatureK)
  const liquidKgM3 = co2SaturatedLiquidDensityKgM3(temperatureK)
  const vapourKgM3 = co2SaturatedVapourDensityKgM3(temperatureK)
  const at = (phase: Co2Phase, pressurePa: number): Phase => ({ phase, pressurePa, fillDensityKgM3: rho, liquidKgM3, vapourKgM3 })
  if (rho <= vapourKgM3) return at('gas', Math.min(co2PengRobinsonPressurePa(rho, temperatureK), pSat))
  if (rho >= liquidKgM3) return at('liquid-full', Math.max(co2PengRobinsonPressurePa(rho, temperatureK), pSat))
  return at('two-phase', pSat)
}

/**
 * Bottle pressure alone, Pa absolute: the pressure of co2BottleState without the phase split or the warning
 * text, for use inside a time step.
 */
export function co2BottlePressurePa(input: Co2BottleInput): number {
  return phaseOf(checkBottle(input), input.temperatureK).pressurePa
}

/**
 * Pressure and phase split of a CO₂ bottle from its volume, fill mass and temperature.
 *
 * - Between the saturated densities (below T_c): liquid and vapour share the bottle at p_sat(T), with
 *   m_v = (V − m/ρ′)/(1/ρ″ − 1/ρ′) from the volume and mass balance.
 * - Below ρ″: all vapour. Peng–Robinson at the fill density, capped at p_sat(T) (a subcritical vapour cannot
 *   exceed it; the uncapped equation misses the ancillary curve by under 0.5 % at ρ″).
 * - Above ρ′ (below T_c): the liquid fills the bottle. Peng–Robinson at the fill density, never below p_sat(T);
 *   Peng–Robinson's liquid is too light, so this pressure is an estimate only, and a warning is given.
 * - At or above T_c: one supercritical phase, Peng–Robinson at the fill density, with a warning.
 *
 * Throws a RangeError for a non-positive input, a bottle below the triple point, or more CO₂ than can fit.
 */
export function co2BottleState(input: Co2BottleInput): Co2BottleState {
  const { volumeM3, massKg, temperatureK } = input
  const rho = checkBottle(input)
  const state = phaseOf(rho, temperatureK)
  const { pressurePa } = state
  switch (state.phase) {
    case 'supercritical':
      return {
        pressurePa,
        liquidMassKg: 0,
        vapourMassKg: massKg,
        phase: 'supercritical',
        fillDensityKgM3: rho,
        warning:
          `CO₂ at ${fmt(temperatureK - 273.15, 1)} °C is above its critical temperature (30.98 °C): there is no liquid, and ` +
          `bottle pressure (about ${fmt(pressurePa / MPA, 1)} MPa here) rises fast with temperature, about ` +
          `${fmt(riseOver10K(rho, temperatureK) / MPA, 1)} MPa per further 10 K at this fill. Keep the bottle within its ` +
          `maker's rated temperature and pressure; its burst disc and rating, not this estimate, set the limit.`,
      }
    case 'gas':
      return { pressurePa, liquidMassKg: 0, vapourMassKg: massKg, phase: 'gas', fillDensityKgM3: rho }
    case 'liquid-full':
      return {
        pressurePa,
        liquidMassKg: massKg,
        vapourMassKg: 0,
        phase: 'liquid-full',
        fillDensityKgM3: rho,
        warning:
          `the bottle is full of liquid at ${fmt(temperatureK - 273.15, 1)} °C (fill ${fmt(rho, 0)} kg/m³, saturated liquid ` +
          `${fmt(state.liquidKgM3, 0)} kg/m³): any further warming raises its pressure very steeply, and the pressure ` +
          `shown is a rough estimate. Check the fill against the bottle maker's rating; the burst disc is there for this.`,
      }
    case 'two-phase': {
      const vapourMassKg = (volumeM3 - massKg / state.liquidKgM3) / (1 / state.vapourKgM3 - 1 / state.liquidKgM3)
      return { pressurePa, liquidMassKg: massKg - vapourMassKg, vapourMassKg, phase: 'two-phase', fillDensityKgM3: rho }
    }
  }
}

/**
 * Density of CO₂ gas, kg/m³, at an absolute pressure and temperature, from Peng–Robinson (not the ideal gas:
 * at a 2 MPa regulator outlet near room temperature CO₂ is over 10 % denser than p/(R·T)). Below the critical
 * temperature a pressure above saturation would be liquid, not gas, and is refused.
 */
export function co2GasDensityKgM3(pressurePa: number, temperatureK: number): number {
  if (temperatureK < CO2_CRITICAL.temperatureK && temperatureK >= CO2_TRIPLE_POINT_K) {
    const pSat = co2SaturationPressurePa(temperatureK)
    if (pressurePa > pSat) {
      throw new RangeError(
        `CO₂ at ${pressurePa} Pa and ${temperatureK} K would be liquid (saturation pressure ${Math.round(pSat)} Pa)`,
      )
    }
  } else if (temperatureK < CO2_TRIPLE_POINT_K) {
    throw new RangeError(`CO₂ at ${temperatureK} K is below the triple point ${CO2_TRIPLE_POINT_K} K`)
  }
  return pengRobinsonGasDensityKgM3(CO2_PENG_ROBINSON, pressurePa, temperatureK)
}

/**
 * Mass of CO₂ gas that fills one litre of chamber at an absolute pressure and temperature, kg/L (Peng–Robinson);
 * what a regulator spends each time a chamber of that size is filled and vented.
 */
export function co2GasMassPerLitreKg(pressurePa: number, temperatureK: number): number {
  return co2GasDensityKgM3(pressurePa, temperatureK) * 1e-3
}
