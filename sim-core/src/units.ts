/**
 * The one conversion module: everything inside sim-core is SI, and engineering units exist only at the
 * edges (forms, tables, CLI output). Factors are the exact or NIST SP 811 values.
 *
 * Pressures convert as differences (gauge in, gauge out); absolute/gauge is a matter of the field name.
 */

export interface Unit {
  readonly symbol: string
  /** SI value of one unit. */
  readonly factor: number
  /** SI value of the unit's zero (temperatures only). */
  readonly offset: number
}

const unit = (symbol: string, factor: number, offset = 0): Unit => Object.freeze({ symbol, factor, offset })

const INCH_M = 0.0254 // exact (NIST SP 811, B.8)
const POUND_KG = 0.45359237 // exact (NIST SP 811, B.8)
const STANDARD_GRAVITY = 9.80665 // exact (NIST SP 811)
const LBF_N = POUND_KG * STANDARD_GRAVITY // 4.448222 N (NIST SP 811)
const PSI_PA = LBF_N / (INCH_M * INCH_M) // 6894.757 Pa (NIST SP 811)

export const units = Object.freeze({
  // pressure
  Pa: unit('Pa', 1),
  kPa: unit('kPa', 1e3),
  MPa: unit('MPa', 1e6),
  bar: unit('bar', 1e5),
  psi: unit('psi', PSI_PA),
  inHg: unit('inHg', 3386.389), // conventional inch of mercury, 0 °C (NIST SP 811, B.8)
  // length
  m: unit('m', 1),
  mm: unit('mm', 1e-3),
  in: unit('in', INCH_M),
  // force
  N: unit('N', 1),
  lbf: unit('lbf', LBF_N),
  // spring rate
  NPerM: unit('N/m', 1),
  NPerMm: unit('N/mm', 1e3),
  lbfPerIn: unit('lbf/in', LBF_N / INCH_M),
  // temperature
  K: unit('K', 1),
  degC: unit('°C', 1, 273.15),
  degF: unit('°F', 5 / 9, 459.67 * (5 / 9)),
  // area
  m2: unit('m²', 1),
  mm2: unit('mm²', 1e-6),
  cm2: unit('cm²', 1e-4),
  in2: unit('in²', INCH_M * INCH_M),
  // volume
  m3: unit('m³', 1),
  L: unit('L', 1e-3),
  cm3: unit('cm³', 1e-6),
  in3: unit('in³', INCH_M ** 3),
  // volumetric flow (free air, at the standard conditions of STANDARD_AIR below)
  m3PerS: unit('m³/s', 1),
  LPerMin: unit('L/min', 1e-3 / 60),
  scfm: unit('scfm', (12 * INCH_M) ** 3 / 60),
  // mass
  kg: unit('kg', 1),
  g: unit('g', 1e-3),
  lb: unit('lb', POUND_KG),
  // mass flow
  kgPerS: unit('kg/s', 1),
  gPerS: unit('g/s', 1e-3),
  lbPerMin: unit('lb/min', POUND_KG / 60),
  // rotational speed
  radPerS: unit('rad/s', 1),
  rpm: unit('rpm', (2 * Math.PI) / 60),
  // time
  s: unit('s', 1),
  ms: unit('ms', 1e-3),
  // dimensionless
  ratio: unit('', 1),
  percent: unit('%', 1e-2),
})

export type UnitName = keyof typeof units

/** Value in `u` → SI. */
export function toSI(u: Unit, value: number): number {
  return value * u.factor + u.offset
}

/** SI → value in `u`. */
export function fromSI(u: Unit, value: number): number {
  return (value - u.offset) / u.factor
}

/**
 * Standard conditions for free-air volumetric flow (scfm, L/min): 14.696 psia and 68 °F, the
 * "standard air" of compressor ratings (common practice, no single source; ISO 1217 uses other conditions).
 */
export const STANDARD_AIR = Object.freeze({ pressurePa: 101325, temperatureK: 293.15 })

export type Quantity =
  | 'pressure'
  | 'length'
  | 'smallLength'
  | 'force'
  | 'springRate'
  | 'temperature'
  | 'area'
  | 'volume'
  | 'smallVolume'
  | 'volumeFlow'
  | 'mass'
  | 'gasMass'
  | 'massFlow'
  | 'speed'
  | 'time'
  | 'ratio'

export type UnitSystem = 'us' | 'metric'

/** What each quantity is shown in, per unit system. */
export const displayUnits: Readonly<Record<UnitSystem, Readonly<Record<Quantity, Unit>>>> = Object.freeze({
  us: Object.freeze({
    pressure: units.psi,
    length: units.in,
    smallLength: units.in,
    force: units.lbf,
    springRate: units.lbfPerIn,
    temperature: units.degF,
    area: units.in2,
    volume: units.in3,
    smallVolume: units.in3,
    volumeFlow: units.scfm,
    mass: units.lb,
    gasMass: units.g,
    massFlow: units.lbPerMin,
    speed: units.rpm,
    time: units.s,
    ratio: units.ratio,
  }),
  metric: Object.freeze({
    pressure: units.kPa,
    length: units.mm,
    smallLength: units.mm,
    force: units.N,
    springRate: units.NPerMm,
    temperature: units.degC,
    area: units.mm2,
    volume: units.L,
    smallVolume: units.cm3,
    volumeFlow: units.LPerMin,
    mass: units.kg,
    gasMass: units.g,
    massFlow: units.gPerS,
    speed: units.rpm,
    time: units.s,
    ratio: units.ratio,
  }),
})

/** Decimal places that suit each displayed unit (boost to 0.1 psi, diameters to 0.01 mm, …). */
const decimals: Readonly<Record<string, number>> = {
  psi: 1, kPa: 1, bar: 2, MPa: 2, inHg: 1, Pa: 0,
  in: 3, mm: 2, m: 4,
  lbf: 1, N: 0,
  'lbf/in': 1, 'N/mm': 2, 'N/m': 0,
  '°F': 0, '°C': 0, K: 1,
  'in²': 3, 'mm²': 1, 'cm²': 2, 'm²': 6,
  'in³': 1, 'cm³': 1, L: 2, 'm³': 6,
  scfm: 2, 'L/min': 1, 'm³/s': 5,
  lb: 2, kg: 2, g: 0,
  'lb/min': 2, 'g/s': 1, 'kg/s': 3,
  rpm: 0, 'rad/s': 0, s: 2, ms: 0, '': 2, '%': 0,
}

/** An SI value in the unit `system` shows for `quantity`. */
export function toDisplay(quantity: Quantity, system: UnitSystem, siValue: number): number {
  return fromSI(displayUnits[system][quantity], siValue)
}

/** A value typed in the unit `system` shows for `quantity`, back to SI. */
export function fromDisplay(quantity: Quantity, system: UnitSystem, value: number): number {
  return toSI(displayUnits[system][quantity], value)
}

/** The symbol shown beside a `quantity` field. */
export function unitSymbol(quantity: Quantity, system: UnitSystem): string {
  return displayUnits[system][quantity].symbol
}

/** "11.2 psi": an SI value rounded for display in the user's system. */
export function formatQuantity(quantity: Quantity, system: UnitSystem, siValue: number, digits?: number): string {
  const u = displayUnits[system][quantity]
  const places = digits ?? decimals[u.symbol] ?? 2
  const text = fromSI(u, siValue).toFixed(places)
  return u.symbol ? `${text} ${u.symbol}` : text
}
