import { CO2_FILLING_RATIO_KG_M3 } from './co2-bottles.ts'
import { CO2_SPAN_WAGNER, co2EosPressurePa, co2EosPressureSlopePaPerKgM3 } from './co2-helmholtz.ts'
import { co2EosSaturation, type Co2Saturation } from './co2-saturation.ts'

export * from './co2-bottles.ts'
export * from './co2-helmholtz.ts'
export * from './co2-saturation.ts'

/**
 * Carbon dioxide for the bottle that feeds a top port (MODEL.md §4 supplies). SI throughout; pressures are
 * absolute unless a name says gauge.
 *
 * The bottle's pressure in every phase comes from the reference equation of state of Span & Wagner (J. Phys.
 * Chem. Ref. Data 25, 1509, 1996; co2-helmholtz.ts): the saturation pressure while liquid and vapour share the
 * bottle, with the saturated densities that decide the phase solved from the same equation (co2-saturation.ts),
 * and the equation at the fill density and temperature where one phase fills it. So the pressure is continuous
 * across every phase boundary. The paper's ancillary equations (eqs. 3.13–3.15) are kept below for quick
 * estimates; they agree with the equation's own saturation within 0.005 %.
 */

/** Critical point of the Span & Wagner equations: T_c 304.1282 K, p_c 7.3773 MPa, ρ_c 467.6 kg/m³. */
export const CO2_CRITICAL = Object.freeze({ temperatureK: 304.1282, pressurePa: 7.3773e6, densityKgM3: 467.6 })
/** Triple point, 216.592 K (Span & Wagner 1996); below it CO₂ is solid and the ancillaries do not apply. */
export const CO2_TRIPLE_POINT_K = 216.592
/** 44.0095 g/mol (IUPAC atomic weights). */
export const CO2_MOLAR_MASS_KG_PER_MOL = 0.0440095
/** Universal gas constant, J/(mol·K) (exact since the 2019 SI redefinition). */
export const MOLAR_GAS_CONSTANT = 8.314462618
/**
 * Specific gas constant, 188.92 J/(kg·K), for CO₂ as an ideal gas in the chambers. The equation of state keeps
 * its own 188.9241 J/(kg·K) (CO2_SPAN_WAGNER); the two differ by 2 parts in 10⁷.
 */
export const CO2_GAS_CONSTANT = MOLAR_GAS_CONSTANT / CO2_MOLAR_MASS_KG_PER_MOL

/**
 * A typical burst-disc rating of a CO₂ bottle: 3000 psi gauge (20.7 MPa) on the usual 1800 psi service-pressure
 * cylinders (common practice, no source). The bottle maker's stamped rating always comes first.
 */
export const CO2_TYPICAL_BURST_DISC_GAUGE_PA = 3000 * 6894.757293168
/** The Span & Wagner equation holds to 800 MPa (Span & Wagner 1996). */
const CO2_EOS_MAX_PRESSURE_PA = 800e6

/** Above this fraction of the typical burst-disc rating the bottle's state carries a warning (our margin, not a rule). */
export const CO2_BURST_DISC_WARNING_FRACTION = 0.8

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
const PSI = 6894.757293168
/** A gauge for the burst-disc comparison needs an ambient; the bottle's state has none, so the standard one. */
const STANDARD_ATMOSPHERE_PA = 101_325
const fmt = (x: number, places: number) => x.toFixed(places)

/**
 * Liquid CO₂ is densest at its triple point (Span & Wagner eq. 3.14 there, about 1178 kg/m³): no bottle can hold
 * more than this per cubic metre, whatever its temperature.
 */
export const CO2_DENSEST_LIQUID_KG_M3 = co2SaturatedLiquidDensityKgM3(CO2_TRIPLE_POINT_K)

/**
 * The equation's saturation for the last few temperatures asked for. A pull asks at one bottle temperature many
 * thousands of times, and a solve costs tens of microseconds; the cache changes no result, only the time.
 */
const SATURATION_CACHE_SIZE = 16
const saturationCache = new Map<number, Co2Saturation>()

function saturationAt(temperatureK: number): Co2Saturation {
  const cached = saturationCache.get(temperatureK)
  if (cached !== undefined) return cached
  const saturation = co2EosSaturation(temperatureK)
  if (saturationCache.size >= SATURATION_CACHE_SIZE) {
    const oldest = saturationCache.keys().next()
    if (oldest.done !== true) saturationCache.delete(oldest.value)
  }
  saturationCache.set(temperatureK, saturation)
  return saturation
}

function checkPositive(name: string, value: number): void {
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(`${name} must be a positive number, got ${value}`)
}

function checkTemperature(temperatureK: number): void {
  checkPositive('temperatureK', temperatureK)
  if (temperatureK < CO2_TRIPLE_POINT_K) {
    throw new RangeError(`a CO₂ bottle at ${temperatureK} K is below the triple point ${CO2_TRIPLE_POINT_K} K (solid CO₂)`)
  }
}

function checkFill(volumeM3: number, massKg: number): number {
  const rho = massKg / volumeM3
  if (rho > CO2_DENSEST_LIQUID_KG_M3) {
    throw new RangeError(
      `${massKg} kg of CO₂ cannot fit in ${volumeM3 * 1000} L: ${fmt(rho, 0)} kg/m³ is denser than liquid CO₂ ever is ` +
        `(${fmt(CO2_DENSEST_LIQUID_KG_M3, 0)} kg/m³ at the triple point)`,
    )
  }
  return rho
}

function checkBottle({ volumeM3, massKg, temperatureK }: Co2BottleInput): number {
  checkPositive('volumeM3', volumeM3)
  checkPositive('massKg', massKg)
  checkTemperature(temperatureK)
  return checkFill(volumeM3, massKg)
}

/** Bottle pressure at a checked fill density: p_sat between the saturated densities, else the equation of state. */
function pressureAt(rho: number, temperatureK: number): number {
  if (temperatureK >= CO2_CRITICAL.temperatureK) return co2EosPressurePa(rho, temperatureK)
  const s = saturationAt(temperatureK)
  return rho > s.vapourDensityKgM3 && rho < s.liquidDensityKgM3 ? s.pressurePa : co2EosPressurePa(rho, temperatureK)
}

function phaseAt(rho: number, temperatureK: number): Co2Phase {
  if (temperatureK >= CO2_CRITICAL.temperatureK) return 'supercritical'
  const s = saturationAt(temperatureK)
  if (rho <= s.vapourDensityKgM3) return 'gas'
  return rho >= s.liquidDensityKgM3 ? 'liquid-full' : 'two-phase'
}

/**
 * Bottle pressure alone, Pa absolute: the pressure of co2BottleState without the phase split or the warning
 * text, for use inside a time step. Same checks and RangeErrors as co2BottleState.
 */
export function co2BottlePressurePa(input: Co2BottleInput): number {
  return pressureAt(checkBottle(input), input.temperatureK)
}

/**
 * The bottle pressure of one bottle at one temperature as a function of the CO₂ mass left, Pa absolute: the same
 * numbers as co2BottlePressurePa, for a right-hand side that asks many times as the mass is drawn. The saturation
 * is solved once here; a call then costs a comparison while liquid remains (the saturation pressure) and one
 * evaluation of the equation of state once one phase fills the bottle.
 *
 * Throws a RangeError for a bad volume or temperature here, and for a bad mass at the call.
 */
export function co2BottlePressureFunction(volumeM3: number, temperatureK: number): (massKg: number) => number {
  checkPositive('volumeM3', volumeM3)
  checkTemperature(temperatureK)
  const pressure = (massKg: number) => {
    checkPositive('massKg', massKg)
    return co2EosPressurePa(checkFill(volumeM3, massKg), temperatureK)
  }
  if (temperatureK >= CO2_CRITICAL.temperatureK) return pressure
  const { pressurePa, vapourDensityKgM3, liquidDensityKgM3 } = co2EosSaturation(temperatureK)
  // The same comparison on the density as co2BottlePressurePa, so that both put a boundary fill in the same phase.
  return (massKg) => {
    const rho = massKg / volumeM3
    return rho > vapourDensityKgM3 && rho < liquidDensityKgM3 ? pressurePa : pressure(massKg)
  }
}

/** (∂p/∂T) at the fill density, Pa/K, from the equation of state by a central difference over ±0.01 K. */
function isochoricSlopePaPerK(rho: number, temperatureK: number): number {
  const h = 0.01
  return (co2EosPressurePa(rho, temperatureK + h) - co2EosPressurePa(rho, temperatureK - h)) / (2 * h)
}

/**
 * The temperature at which a fill denser than ρ_c leaves no room for vapour, K: where the saturated liquid density
 * falls to the fill density. For the warning's round figure the ancillary equation is close enough (within
 * 0.005 % of the equation's own ρ′, about a hundredth of a kelvin).
 */
function liquidFullFromK(rho: number): number {
  let cold: number = CO2_TRIPLE_POINT_K
  let hot: number = CO2_CRITICAL.temperatureK
  for (let i = 0; i < 60; i++) {
    const mid = (cold + hot) / 2
    if (co2SaturatedLiquidDensityKgM3(mid) > rho) cold = mid
    else hot = mid
  }
  return (cold + hot) / 2
}

const celsius = (temperatureK: number) => fmt(temperatureK - 273.15, 1)

function warningsFor(phase: Co2Phase, rho: number, pressurePa: number, temperatureK: number): string | undefined {
  const notes: string[] = []
  const gaugePa = pressurePa - STANDARD_ATMOSPHERE_PA
  const ofRating = gaugePa / CO2_TYPICAL_BURST_DISC_GAUGE_PA
  const rating = `${fmt(CO2_TYPICAL_BURST_DISC_GAUGE_PA / MPA, 1)} MPa (${fmt(CO2_TYPICAL_BURST_DISC_GAUGE_PA / PSI, 0)} psi)`
  if (ofRating >= 1) {
    notes.push(
      `Bottle pressure, about ${fmt(gaugePa / MPA, 1)} MPa gauge (${fmt(gaugePa / PSI, 0)} psi), is above a typical ` +
        `burst-disc rating of ${rating} for 1800 psi service-pressure bottles (common practice, no source): a disc ` +
        `rated so would be expected to burst and vent the bottle.`,
    )
  } else if (ofRating >= CO2_BURST_DISC_WARNING_FRACTION) {
    notes.push(
      `Bottle pressure, about ${fmt(gaugePa / MPA, 1)} MPa gauge (${fmt(gaugePa / PSI, 0)} psi), is ` +
        `${fmt(100 * ofRating, 0)} % of a typical burst-disc rating of ${rating} for 1800 psi service-pressure ` +
        `bottles (common practice, no source): it is near the point where such a disc bursts and vents the bottle.`,
    )
  }
  if (phase === 'liquid-full') {
    notes.push(
      `The bottle is full of liquid at ${celsius(temperatureK)} °C (fill ${fmt(rho, 0)} kg/m³, more than the ` +
        `saturated liquid's ${fmt(saturationAt(temperatureK).liquidDensityKgM3, 0)} kg/m³): with no vapour space ` +
        `left, its pressure (about ${fmt(pressurePa / MPA, 1)} MPa here) rises very steeply with temperature, about ` +
        `${fmt(isochoricSlopePaPerK(rho, temperatureK) / MPA, 2)} MPa per K at this fill.`,
    )
  } else if (phase === 'supercritical') {
    const rise = co2EosPressurePa(rho, temperatureK + 10) - pressurePa
    notes.push(
      `CO₂ at ${celsius(temperatureK)} °C is above its critical temperature (30.98 °C): there is no liquid, and ` +
        `bottle pressure (about ${fmt(pressurePa / MPA, 1)} MPa here) rises fast with temperature, about ` +
        `${fmt(rise / MPA, 1)} MPa per further 10 K at this fill.`,
    )
  }
  if (rho > CO2_FILLING_RATIO_KG_M3 * (1 + 1e-9)) {
    notes.push(
      `The fill, ${fmt(rho / 1000, 3)} kg per litre of bottle volume, is above the usual filling limit of ` +
        `${fmt(CO2_FILLING_RATIO_KG_M3 / 1000, 2)} kg/L (common practice; many codes cap CO₂ filling at about ` +
        `0.68 kg/L): such a bottle is full of liquid from about ${celsius(liquidFullFromK(rho))} °C, and above that ` +
        `its pressure climbs steeply with any warming.`,
    )
  }
  if (notes.length === 0) return undefined
  notes.push(
    `The bottle maker's rating, its burst disc and local codes, not this estimate, set the limits: defer to them.`,
  )
  return notes.join(' ')
}

/**
 * Pressure and phase split of a CO₂ bottle from its volume, fill mass and temperature, all from the Span & Wagner
 * equation of state.
 *
 * - Between the saturated densities ρ″ and ρ′ (below T_c): liquid and vapour share the bottle at p_sat(T), with
 *   m_v = (V − m/ρ′)/(1/ρ″ − 1/ρ′) from the volume and mass balance.
 * - At or below ρ″: all vapour, phase `gas`; at or above ρ′: the liquid fills the bottle, phase `liquid-full`.
 *   Either way the pressure is the equation's at the fill density, which meets p_sat at the saturated density.
 * - At or above T_c: one supercritical phase at the equation's pressure.
 *
 * `warning` carries, in plain words, whichever apply: a pressure near or above a typical burst-disc rating, a
 * liquid-full bottle (with its pressure rise per kelvin), a supercritical one (with its rise per further 10 K), and
 * a fill above the usual 0.68 kg/L.
 *
 * Throws a RangeError for a non-positive input, a bottle below the triple point, or more CO₂ than can fit.
 */
export function co2BottleState(input: Co2BottleInput): Co2BottleState {
  const { volumeM3, massKg, temperatureK } = input
  const rho = checkBottle(input)
  const pressurePa = pressureAt(rho, temperatureK)
  const phase = phaseAt(rho, temperatureK)
  let liquidMassKg = 0
  let vapourMassKg = massKg
  if (phase === 'liquid-full') {
    liquidMassKg = massKg
    vapourMassKg = 0
  } else if (phase === 'two-phase') {
    const s = saturationAt(temperatureK)
    vapourMassKg = (volumeM3 - massKg / s.liquidDensityKgM3) / (1 / s.vapourDensityKgM3 - 1 / s.liquidDensityKgM3)
    liquidMassKg = massKg - vapourMassKg
  }
  const warning = warningsFor(phase, rho, pressurePa, temperatureK)
  return {
    pressurePa,
    liquidMassKg,
    vapourMassKg,
    phase,
    fillDensityKgM3: rho,
    ...(warning === undefined ? {} : { warning }),
  }
}

/**
 * Density of CO₂ gas, kg/m³, at an absolute pressure and temperature, from the equation of state (not the ideal
 * gas: at a 2 MPa regulator outlet near room temperature CO₂ is over 10 % denser than p/(R·T)). Below the critical
 * temperature a pressure above saturation would be liquid, not gas, and is refused; at or above it the isotherm
 * rises monotonically and has one root.
 */
export function co2GasDensityKgM3(pressurePa: number, temperatureK: number): number {
  checkPositive('pressurePa', pressurePa)
  checkPositive('temperatureK', temperatureK)
  if (pressurePa > CO2_EOS_MAX_PRESSURE_PA) {
    throw new RangeError(
      `pressurePa ${pressurePa} is beyond the ${CO2_EOS_MAX_PRESSURE_PA / MPA} MPa to which the CO₂ equation of state holds`,
    )
  }
  if (temperatureK < CO2_TRIPLE_POINT_K) {
    throw new RangeError(`CO₂ at ${temperatureK} K is below the triple point ${CO2_TRIPLE_POINT_K} K`)
  }
  let hi: number
  if (temperatureK < CO2_CRITICAL.temperatureK) {
    const s = saturationAt(temperatureK)
    if (pressurePa > s.pressurePa) {
      throw new RangeError(
        `CO₂ at ${pressurePa} Pa and ${temperatureK} K would be liquid (saturation pressure ${Math.round(s.pressurePa)} Pa)`,
      )
    }
    // The vapour branch runs from zero density up to ρ″, where it reaches p_sat.
    hi = s.vapourDensityKgM3
  } else {
    hi = CO2_CRITICAL.densityKgM3
    for (let i = 0; i < 60 && co2EosPressurePa(hi, temperatureK) < pressurePa; i++) hi *= 1.5
  }
  return densityOnBranch(pressurePa, temperatureK, hi)
}

/**
 * The density in (0, hi] at which the equation gives `pressurePa`, where p rises with ρ across that range: Newton's
 * method from the ideal gas, kept inside a shrinking bracket by bisection whenever a step would leave it.
 */
function densityOnBranch(pressurePa: number, temperatureK: number, hi: number): number {
  let lo = 0
  let rho = Math.min(pressurePa / (CO2_SPAN_WAGNER.gasConstantJPerKgK * temperatureK), hi)
  for (let i = 0; i < 200; i++) {
    const f = co2EosPressurePa(rho, temperatureK) - pressurePa
    if (f === 0) return rho
    if (f > 0) hi = rho
    else lo = rho
    let next = rho - f / co2EosPressureSlopePaPerKgM3(rho, temperatureK)
    if (!(next > lo && next < hi)) next = (lo + hi) / 2
    if (Math.abs(next - rho) <= 1e-13 * rho) return next
    rho = next
  }
  return rho
}

/**
 * Mass of CO₂ gas that fills one litre of chamber at an absolute pressure and temperature, kg/L (equation of
 * state); what a regulator spends each time a chamber of that size is filled and vented.
 */
export function co2GasMassPerLitreKg(pressurePa: number, temperatureK: number): number {
  return co2GasDensityKgM3(pressurePa, temperatureK) * 1e-3
}
