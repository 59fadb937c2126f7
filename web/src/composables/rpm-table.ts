/** One row of a table over engine speed: rpm and the figure at it (SI). */
export interface RpmRow {
  rpm: number
  value: number
}

/** sim-core's limit on the points of an rpm table (scenario.ts). */
export const MAX_RPM_ROWS = 32
/** sim-core's top engine speed for a table point. */
const TOP_RPM = 20_000
/** A new point sits this far above the last one, a usual step of a dyno table (common practice, no source). */
const RPM_STEP = 500

/** Rows in rising rpm; rows not yet a number go last, in the order they were typed. */
export function sortRpmRows(rows: readonly RpmRow[]): RpmRow[] {
  const key = (row: RpmRow) => (Number.isFinite(row.rpm) ? row.rpm : Number.POSITIVE_INFINITY)
  return rows
    .map((row, index) => ({ row, index }))
    .sort((a, b) => key(a.row) - key(b.row) || a.index - b.index)
    .map(({ row }) => row)
}

/** A point after the highest one, with its figure, for the user to edit. */
export function addRpmRow(rows: readonly RpmRow[]): RpmRow[] {
  const sorted = sortRpmRows(rows)
  const last = [...sorted].reverse().find((row) => Number.isFinite(row.rpm)) ?? sorted[sorted.length - 1]
  const rpm = Math.min(TOP_RPM, (last && Number.isFinite(last.rpm) ? last.rpm : 0) + RPM_STEP)
  return [...sorted, { rpm, value: last?.value ?? Number.NaN }]
}

/** Every path a table's editor shows a message for: the table itself and each cell. */
export function rpmTablePaths(path: string, valueKey: string, rows: unknown): string[] {
  const count = Array.isArray(rows) ? rows.length : 0
  return [path, ...Array.from({ length: count }, (_, i) => [`${path}.${i}.rpm`, `${path}.${i}.${valueKey}`]).flat()]
}
