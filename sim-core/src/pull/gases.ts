import { CO2_GAS_CONSTANT } from '../co2.ts'
import { AIR, type GasProperties } from '../gas.ts'
import type { Scenario } from '../scenario.ts'

/**
 * CO₂ as the ideal gas that fills a chamber at a few bar: γ ≈ 1.29 near room temperature (common practice,
 * no source). The bottle itself is not ideal; co2.ts handles it.
 */
export const CO2_CHAMBER_GAS: GasProperties = Object.freeze({
  gasConstant: CO2_GAS_CONSTANT,
  gamma: 1.29,
  cp: (1.29 * CO2_GAS_CONSTANT) / 0.29,
})

/** Exhaust gas of a scenario: R_e = c_pe·(γ_e − 1)/γ_e, derived and never entered (MODEL.md §4a). */
export function exhaustGas(exhaust: Scenario['exhaust']): GasProperties {
  const gamma = exhaust.gasHeatCapacityRatio
  const cp = exhaust.gasSpecificHeatJPerKgK
  return Object.freeze({ gasConstant: (cp * (gamma - 1)) / gamma, gamma, cp })
}

/**
 * The gas in a chamber: CO₂ when a CO₂ bottle feeds it, else air. Both levels take it from here, so the static
 * divider and the pull's chambers flow the same gas.
 */
export function chamberGas(s: Scenario, connections: readonly { source: string }[]): GasProperties {
  return s.supply.kind === 'co2' && connections.some((k) => k.source === 'supply') ? CO2_CHAMBER_GAS : AIR
}
