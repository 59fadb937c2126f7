/**
 * Usual CO₂ bottle sizes and the fill they take. A bottle is sold by the mass of CO₂ it holds; its internal (water)
 * volume follows from the filling ratio, 0.68 kg of CO₂ per litre of water volume (common practice, no source;
 * many codes cap CO₂ filling at about 0.68 kg/L). SI inside: kg, m³.
 */

/** 0.68 kg of CO₂ per litre of water volume, as kg/m³ (common practice, no source). */
export const CO2_FILLING_RATIO_KG_M3 = 680

/** One pound, kg (exact, by definition of the international pound). */
const POUND_KG = 0.45359237

export interface Co2BottleSize {
  /** As the trade names it, e.g. "5 lb". */
  label: string
  /** CO₂ the bottle is sold to hold. */
  nominalMassKg: number
  /** Internal volume: nominal mass / 0.68 kg/L (common practice, no source). */
  waterVolumeM3: number
}

const bySoldMass = (pounds: number): Co2BottleSize => {
  const nominalMassKg = pounds * POUND_KG
  return Object.freeze({ label: `${pounds} lb`, nominalMassKg, waterVolumeM3: nominalMassKg / CO2_FILLING_RATIO_KG_M3 })
}

/**
 * The usual bottle sizes by nominal CO₂ mass (common practice, no source), each with the water volume the 0.68 kg/L
 * sizing rule gives it. A real bottle's stamped water capacity may differ a little; use it when it is known.
 */
export const CO2_BOTTLE_SIZES: readonly Co2BottleSize[] = Object.freeze([2.5, 5, 10, 15, 20].map(bySoldMass))

/**
 * The CO₂ mass a bottle of this water volume is filled with at the usual filling ratio, 0.68 kg/L (common
 * practice, no source). Throws a RangeError for a volume that is not a positive number.
 */
export function co2DefaultFillMassKg(waterVolumeM3: number): number {
  if (!Number.isFinite(waterVolumeM3) || waterVolumeM3 <= 0) {
    throw new RangeError(`waterVolumeM3 must be a positive number, got ${waterVolumeM3}`)
  }
  return waterVolumeM3 * CO2_FILLING_RATIO_KG_M3
}
