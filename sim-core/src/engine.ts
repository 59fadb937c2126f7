import { AIR } from './gas.ts'

/**
 * The engine of a pull (MODEL.md §4): a four-stroke pump whose speed ramps linearly over the pull.
 * SI throughout: Pa absolute, K, m³, kg/s; speeds in rpm because the four-stroke formula is written in them.
 */

/**
 * Four-stroke air flow, kg/s: ṁ = η_v · p_im/(R_a·T_im) · V_d · N/120 (one intake stroke per cylinder every
 * two revolutions; any internal-combustion engine text).
 */
export function fourStrokeAirFlowKgS(
  volumetricEfficiency: number,
  manifoldPressurePa: number,
  chargeTemperatureK: number,
  displacementM3: number,
  rpm: number,
  gasConstant: number = AIR.gasConstant,
): number {
  return (volumetricEfficiency * manifoldPressurePa * displacementM3 * rpm) / (120 * gasConstant * chargeTemperatureK)
}

/** Exhaust mass flow: the air plus the fuel burnt in it, ṁ_exh = ṁ_eng·(1 + 1/AFR). */
export function exhaustFlowKgS(airFlowKgS: number, airFuelRatio: number): number {
  return airFlowKgS * (1 + 1 / airFuelRatio)
}

/** Engine speed during a pull: linear from `rpmStart` to `rpmEnd` over `pullDurationS`, held after it. */
export function rpmAt(engine: { rpmStart: number; rpmEnd: number; pullDurationS: number }, timeS: number): number {
  const f = Math.min(Math.max(timeS / engine.pullDurationS, 0), 1)
  return engine.rpmStart + (engine.rpmEnd - engine.rpmStart) * f
}

/** A value interpolated linearly in a table sorted by its key; held at the ends. */
export function interpolateTable(keys: readonly number[], values: readonly number[], key: number): number {
  const n = keys.length
  if (n === 0 || values.length !== n) throw new RangeError('a table needs as many values as keys, at least one')
  if (key <= keys[0]!) return values[0]!
  if (key >= keys[n - 1]!) return values[n - 1]!
  let hi = 1
  while (keys[hi]! < key) hi++
  const k0 = keys[hi - 1]!
  const k1 = keys[hi]!
  const v0 = values[hi - 1]!
  return v0 + ((values[hi]! - v0) * (key - k0)) / (k1 - k0)
}

/**
 * Charge temperature after the compressor and an intercooler of effectiveness ε:
 * T_out = T_amb·(1 + (Π^((γ−1)/γ) − 1)/η_c), T_im = T_out − ε·(T_out − T_amb).
 */
export function intercooledChargeTemperatureK(
  ambientTemperatureK: number,
  pressureRatio: number,
  compressorEfficiency: number,
  effectiveness: number,
  gamma: number = AIR.gamma,
): number {
  const rise = (Math.max(pressureRatio, 1) ** ((gamma - 1) / gamma) - 1) / compressorEfficiency
  return ambientTemperatureK * (1 + (1 - effectiveness) * rise)
}
