import { displayUnits, formatQuantity, fromSI, toSI, units, type Quantity, type Unit, type UnitSystem } from '@crackpoint/sim-core'

/**
 * What a form field measures. sim-core's quantities cover most fields; the rest are built here from its
 * unit factors, so every conversion still goes through its one module:
 * - `percent`: a fraction 0…1 (duty, bleed share, efficiencies) shown as %.
 * - `rpm`: engine speed, already in rpm inside the scenario.
 * - `restriction`: a dump restriction K of p = K·ṁ², Pa per (kg/s)².
 * - `gainP` duty per Pa, `gainI` duty per (Pa·s), `gainD` duty·s per Pa: a controller's gains.
 * - `inertia`: a shaft's moment of inertia, kg·m².
 * - `minutes`: a stretch of a working day, seconds in the scenario, shown in minutes.
 * - `plain`: a number without a unit (a coefficient, a count).
 */
export type FieldQuantity =
  | Quantity
  | 'percent'
  | 'rpm'
  | 'restriction'
  | 'gainP'
  | 'gainI'
  | 'gainD'
  | 'inertia'
  | 'minutes'
  | 'plain'

const unit = (symbol: string, factor: number): Unit => Object.freeze({ symbol, factor, offset: 0 })

const LOCAL: Readonly<Record<Exclude<FieldQuantity, Quantity>, Readonly<Record<UnitSystem, Unit>>>> = {
  percent: { us: units.percent, metric: units.percent },
  rpm: { us: unit('rpm', 1), metric: unit('rpm', 1) },
  restriction: {
    us: unit('psi/(lb/s)²', units.psi.factor / units.lb.factor ** 2),
    metric: unit('kPa/(kg/s)²', units.kPa.factor),
  },
  gainP: {
    us: unit('%/psi', units.percent.factor / units.psi.factor),
    metric: unit('%/kPa', units.percent.factor / units.kPa.factor),
  },
  gainI: {
    us: unit('%/(psi·s)', units.percent.factor / units.psi.factor),
    metric: unit('%/(kPa·s)', units.percent.factor / units.kPa.factor),
  },
  gainD: {
    us: unit('%·s/psi', units.percent.factor / units.psi.factor),
    metric: unit('%·s/kPa', units.percent.factor / units.kPa.factor),
  },
  inertia: {
    us: unit('lb·in²', units.lb.factor * units.in.factor ** 2),
    metric: unit('kg·cm²', units.kg.factor * units.cm2.factor),
  },
  minutes: { us: unit('min', 60), metric: unit('min', 60) },
  plain: { us: units.ratio, metric: units.ratio },
}

export function isSimQuantity(quantity: FieldQuantity): quantity is Quantity {
  return !(quantity in LOCAL)
}

/** The unit `system` shows a field of `quantity` in. */
export function fieldUnit(quantity: FieldQuantity, system: UnitSystem): Unit {
  return isSimQuantity(quantity) ? displayUnits[system][quantity] : LOCAL[quantity][system]
}

export function fieldToDisplay(quantity: FieldQuantity, system: UnitSystem, si: number): number {
  return fromSI(fieldUnit(quantity, system), si)
}

export function fieldFromDisplay(quantity: FieldQuantity, system: UnitSystem, value: number): number {
  return toSI(fieldUnit(quantity, system), value)
}

/** Four significant figures (or `digits` decimals) for the units sim-core has no rounding rule for. */
export function formatFieldQuantity(quantity: FieldQuantity, system: UnitSystem, si: number, digits?: number): string {
  const u = fieldUnit(quantity, system)
  const value = fromSI(u, si)
  const text = !Number.isFinite(value) ? '—' : digits === undefined ? String(Number(value.toPrecision(4))) : value.toFixed(digits)
  return u.symbol ? `${text} ${u.symbol}` : text
}

/** "11.2 psi", "55 %": any field's SI value rounded for display in `system`. */
export function formatField(quantity: FieldQuantity, system: UnitSystem, si: number, digits?: number): string {
  return isSimQuantity(quantity) ? formatQuantity(quantity, system, si, digits) : formatFieldQuantity(quantity, system, si, digits)
}
