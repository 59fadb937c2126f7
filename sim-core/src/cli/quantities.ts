import { fromSI, units, type Quantity, type Unit, type UnitSystem, displayUnits } from '../units.ts'

/**
 * The quantity of a scenario field, read from the unit at the end of its name (`seatForceN`, `bottleVolumeM3`),
 * so that a sweep axis can be shown in the user's units. Longer suffixes are tried first.
 */
const SUFFIXES: readonly (readonly [string, Quantity | 'plain'])[] = [
  ['PaPerKg2S2', 'plain'],
  ['WPerRad2S2', 'plain'],
  ['KgM2', 'plain'],
  ['PerPaS', 'plain'],
  ['SPerPa', 'plain'],
  ['PerPa', 'plain'],
  ['M3PerS', 'volumeFlow'],
  ['NPerM', 'springRate'],
  ['ChamberVolumeM3', 'smallVolume'],
  ['M3', 'volume'],
  ['M2', 'area'],
  ['Pa', 'pressure'],
  ['RadS', 'speed'],
  ['Kg', 'mass'],
  ['K', 'temperature'],
  ['N', 'force'],
  ['M', 'smallLength'],
  ['S', 'time'],
]

export function quantityOfField(path: string): Quantity | null {
  const field = path.split('.').pop() ?? path
  for (const [suffix, quantity] of SUFFIXES) {
    if (field.endsWith(suffix)) return quantity === 'plain' ? null : quantity
  }
  return null
}

/** The unit a field is shown in: by its quantity, or its own SI value when the name does not tell. */
export function displayUnitOfField(path: string, system: UnitSystem): Unit {
  const q = quantityOfField(path)
  return q === null ? units.ratio : displayUnits[system][q]
}

/** A field's value in the user's unit, to a sensible number of significant figures. */
export function formatFieldValue(path: string, system: UnitSystem, siValue: number): string {
  const v = fromSI(displayUnitOfField(path, system), siValue)
  return Number.parseFloat(v.toPrecision(4)).toString()
}
