/** Gas properties of the model, SI. */
export interface GasProperties {
  /** Specific gas constant R, J/(kg·K). */
  gasConstant: number
  /** Ratio of specific heats γ. */
  gamma: number
  /** Specific heat at constant pressure c_p, J/(kg·K). */
  cp: number
}

/** Dry air: R = 287.05 J/(kg·K) (from the molar mass 28.9647 g/mol, U.S. Standard Atmosphere 1976), γ = 1.4. */
export const AIR: GasProperties = Object.freeze({ gasConstant: 287.05, gamma: 1.4, cp: (1.4 * 287.05) / 0.4 })
