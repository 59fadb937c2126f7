/**
 * Compressible flow through an orifice (MODEL.md §4, with the §4a guard near equal pressures):
 *
 *   ṁ = C_d·A·p_up/√(R·T_up) · Ψ(p_dn/p_up)
 *   Ψ(π) = √(2γ/(γ−1)·(π^(2/γ) − π^((γ+1)/γ)))  above the critical ratio (2/(γ+1))^(γ/(γ−1)),
 *   Ψ(π) = Ψ(π*) (choked) at or below it.
 *
 * Ψ has an unbounded slope as π → 1, which collapses an integrator's step while a chamber settles. Above
 * π = 1 − LINEAR_CONTINUATION_WIDTH it is replaced by the straight line from Ψ(1 − width) to zero at π = 1,
 * so the flow still vanishes at equal pressures (the change in boost is below 0.001 psi, MODEL.md §4a).
 */

/** Width in π of the linear continuation next to π = 1 (MODEL.md §4a). */
export const LINEAR_CONTINUATION_WIDTH = 1e-4

/** Critical (choking) pressure ratio p_dn/p_up = (2/(γ+1))^(γ/(γ−1)); 0.5283 for γ = 1.4. */
export function criticalPressureRatio(gamma: number): number {
  if (!(gamma > 1)) throw new RangeError(`gamma must be greater than 1, got ${gamma}`)
  return (2 / (gamma + 1)) ** (gamma / (gamma - 1))
}

/** Constants of Ψ for one γ, worked out once so the flow itself costs two powers and a root. */
export interface FlowFunction {
  readonly gamma: number
  readonly criticalRatio: number
  /** Ψ at and below the critical ratio: √γ·(2/(γ+1))^((γ+1)/(2(γ−1))). */
  readonly chokedValue: number
  /** Slope of the linear continuation, Ψ(1 − width)/width. */
  readonly linearSlope: number
  readonly exponentLow: number
  readonly exponentHigh: number
  readonly factor: number
}

/** √(2γ/(γ−1)·(π^(2/γ) − π^((γ+1)/γ))); the powers as exp(k·ln π), about three times faster than `**` here. */
function subcritical(pi: number, exponentLow: number, exponentHigh: number, factor: number): number {
  const ln = Math.log(pi)
  return Math.sqrt(factor * (Math.exp(exponentLow * ln) - Math.exp(exponentHigh * ln)))
}

export function flowFunctionFor(gamma: number): FlowFunction {
  const criticalRatio = criticalPressureRatio(gamma)
  const exponentLow = 2 / gamma
  const exponentHigh = (gamma + 1) / gamma
  const factor = (2 * gamma) / (gamma - 1)
  const edge = 1 - LINEAR_CONTINUATION_WIDTH
  return Object.freeze({
    gamma,
    criticalRatio,
    chokedValue: Math.sqrt(gamma) * (2 / (gamma + 1)) ** ((gamma + 1) / (2 * (gamma - 1))),
    linearSlope: subcritical(edge, exponentLow, exponentHigh, factor) / LINEAR_CONTINUATION_WIDTH,
    exponentLow,
    exponentHigh,
    factor,
  })
}

/** Ψ(π) for 0 ≤ π ≤ 1: choked below the critical ratio, linear next to 1. */
export function flowFunction(pressureRatio: number, f: FlowFunction): number {
  if (pressureRatio <= f.criticalRatio) return f.chokedValue
  if (pressureRatio >= 1) return 0
  if (pressureRatio > 1 - LINEAR_CONTINUATION_WIDTH) return f.linearSlope * (1 - pressureRatio)
  return subcritical(pressureRatio, f.exponentLow, f.exponentHigh, f.factor)
}

/**
 * Signed mass flow from node A to node B, kg/s: positive when p_A > p_B, reversing with the pressures.
 * `dischargeAreaM2` is C_d·A; `sqrtRT` is √(R·T) of the gas at the upstream node, √(J/kg).
 */
export function orificeFlowKgS(dischargeAreaM2: number, pressureAPa: number, pressureBPa: number, sqrtRT: number, f: FlowFunction): number {
  if (dischargeAreaM2 <= 0) return 0
  if (pressureAPa >= pressureBPa) {
    if (pressureAPa <= 0) return 0
    return ((dischargeAreaM2 * pressureAPa) / sqrtRT) * flowFunction(pressureBPa / pressureAPa, f)
  }
  if (pressureBPa <= 0) return 0
  return -((dischargeAreaM2 * pressureBPa) / sqrtRT) * flowFunction(pressureAPa / pressureBPa, f)
}

export interface OrificeInput {
  dischargeCoefficient: number
  areaM2: number
  /** Absolute pressures either side; flow runs from A to B when positive. */
  pressureAPa: number
  pressureBPa: number
  /** Specific gas constant R, J/(kg·K). */
  gasConstant: number
  gamma: number
  /** Temperature of the gas on the upstream side, K. */
  temperatureK: number
}

/** ṁ = C_d·A·p_up/√(R·T_up)·Ψ(p_dn/p_up), signed from A to B; the readable form of `orificeFlowKgS`. */
export function orificeMassFlowKgS(o: OrificeInput): number {
  for (const key of ['dischargeCoefficient', 'areaM2', 'pressureAPa', 'pressureBPa', 'gasConstant', 'temperatureK'] as const) {
    if (!Number.isFinite(o[key]) || o[key] < 0) throw new RangeError(`${key} must be a finite number ≥ 0, got ${o[key]}`)
  }
  return orificeFlowKgS(
    o.dischargeCoefficient * o.areaM2,
    o.pressureAPa,
    o.pressureBPa,
    Math.sqrt(o.gasConstant * o.temperatureK),
    flowFunctionFor(o.gamma),
  )
}
