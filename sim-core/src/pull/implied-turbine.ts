import { boostAtLift } from '../balance.ts'
import { fourStrokeAirFlowKgS, interpolateTable } from '../engine.ts'
import { AIR } from '../gas.ts'
import { flowFunction, flowFunctionFor } from '../orifice.ts'
import type { Scenario } from '../scenario.ts'
import { exhaustGas } from './gases.ts'

/** Boost at which the implied turbine is sized when boost never opens the valve: 1 bar. */
const SIZING_BOOST_WITHOUT_CRACK_PA = 100_000

/** What a ratio-mode pull takes from the scenario's drive line (MODEL.md §4b, start of a pull). */
export interface ImpliedTurbine {
  /** Effective flow area of the turbine the ratio implies (m²); Infinity when the ratio gives no floor. */
  areaM2: number
  /** The boost at which the line is taken whole: the static crack (1 bar when boost never opens the valve). */
  lineBoostPa: number
}

/**
 * The turbine a ratio-mode pull implies (MODEL.md §4b): the effective flow area that passes the engine's whole
 * exhaust flow at the end rpm with the drive pressure the ratio gives at the static crack boost. In ratio mode the
 * drive pressure is never below what this turbine needs to pass the exhaust flow: at low boost that, not the ratio,
 * sets the drive pressure, so a pull spools from the engine's own exhaust flow and no guessed start speed matters.
 * At the crack, at any rpm up to the end, the ratio's drive pressure is at least that need, so the pull cracks where
 * the static balance says. The area is infinite (no such floor) when the ratio's drive pressure does not exceed the
 * turbine outlet.
 *
 * The drive line's pressure at zero boost (`exhaust.driveAtZeroBoostPa`) is a figure for the operating point, where
 * the static balance uses it. The pull spreads it over the boost below the crack (`driveInterceptPa`), so at zero
 * boost the exhaust flow alone sets the drive pressure, and the intercept moves a pull exactly as the same drive
 * pressure at the crack given by a steeper ratio would.
 */
export function impliedTurbine(s: Scenario): ImpliedTurbine {
  const e = s.engine
  const x = s.exhaust
  // The static crack alone (the valve at its seat), not the whole balance with its ratio range.
  const crack = boostAtLift(s, 0)
  const boostPa = crack.status === 'opens' ? Math.max(crack.boostPa, 0) : SIZING_BOOST_WITHOUT_CRACK_PA
  const pAmb = s.ambient.pressurePa
  const pim = pAmb + boostPa
  const ve = e.volumetricEfficiencyByRpm
    ? interpolateTable(e.volumetricEfficiencyByRpm.map((p) => p.rpm), e.volumetricEfficiencyByRpm.map((p) => p.volumetricEfficiency), e.rpmEnd)
    : e.volumetricEfficiency
  const work = (pim / pAmb) ** ((AIR.gamma - 1) / AIR.gamma) - 1
  const chargeK =
    e.intercoolerEffectiveness === undefined
      ? e.chargeTemperatureK
      : s.ambient.temperatureK * (1 + ((1 - e.intercoolerEffectiveness) * work) / s.turbo.compressorEfficiency)
  const exhaustKgS = fourStrokeAirFlowKgS(ve, pim, chargeK, e.displacementM3, e.rpmEnd) * (1 + 1 / e.airFuelRatio)
  const ratio = x.ratioByRpm ? interpolateTable(x.ratioByRpm.map((p) => p.rpm), x.ratioByRpm.map((p) => p.ratio), e.rpmEnd) : x.ratio
  const pem = pAmb + ratio * boostPa + x.driveAtZeroBoostPa
  const pto = pAmb + x.backPressureCoefficientPaPerKg2S2 * exhaustKgS * exhaustKgS
  if (!(pem > pto)) return { areaM2: Infinity, lineBoostPa: boostPa }
  const gas = exhaustGas(x)
  const psi = flowFunction(pto / pem, flowFunctionFor(gas.gamma))
  return { areaM2: (exhaustKgS * Math.sqrt(gas.gasConstant * e.exhaustTemperatureK)) / (pem * psi), lineBoostPa: boostPa }
}

/** The effective flow area alone (see `impliedTurbine`). */
export function impliedTurbineAreaM2(s: Scenario): number {
  return impliedTurbine(s).areaM2
}

/**
 * The part of the drive line's zero-boost pressure a ratio-mode pull adds at boost b: all of it from the static crack
 * up, in proportion to boost below it (see `impliedTurbine`).
 */
export function driveInterceptPa(driveAtZeroBoostPa: number, lineBoostPa: number, boostPa: number): number {
  if (boostPa <= 0) return 0
  return boostPa >= lineBoostPa ? driveAtZeroBoostPa : (driveAtZeroBoostPa * boostPa) / lineBoostPa
}
