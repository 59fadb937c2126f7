import { evaluateStaticPoint, pointAt, type StaticPointResult } from '../sweep-grid.ts'
import { formatQuantity, type UnitSystem } from '../units.ts'
import type { SweepFile } from './input.ts'
import { CAUTION } from './describe.ts'
import { displayUnitOfField, formatFieldValue } from './quantities.ts'
import { renderTable } from './table.ts'

export interface SweepRow {
  index: number
  /** Axis values, SI. */
  values: number[]
  static: StaticPointResult
}

/** Every point of a sweep at the static level, in index order. */
export function runStaticSweep(sweep: SweepFile): SweepRow[] {
  return Array.from({ length: sweep.pointCount }, (_, index) => {
    const point = pointAt(sweep.scenario, sweep.axes, index)
    return { index, values: point.values, static: evaluateStaticPoint(point.scenario) }
  })
}

const STATUS_TEXT = { ok: 'opens', 'never-opens': 'never opens', 'open-at-zero-boost': 'open at zero boost' } as const

export function axisHeader(path: string, system: UnitSystem): string {
  const symbol = displayUnitOfField(path, system).symbol
  return symbol ? `${path} (${symbol})` : path
}

/** The static points as a table: axis values in the user's units, then status, crack and full-open boost. */
export function renderStaticSweep(title: string, sweep: SweepFile, rows: readonly SweepRow[], system: UnitSystem): string {
  const p = (pa: number | null) => (pa === null ? '—' : formatQuantity('pressure', system, pa))
  const header = ['#', ...sweep.axes.map((a) => axisHeader(a.path, system)), 'status', 'crack', 'full open']
  const body = rows.map((r) => [
    String(r.index),
    ...r.values.map((v, i) => formatFieldValue(sweep.axes[i]?.path ?? '', system, v)),
    STATUS_TEXT[r.static.status],
    p(r.static.crackBoostPa),
    p(r.static.fullOpenBoostPa),
  ])
  const axes = sweep.axes.map((a) => `${a.path} × ${a.values.length}`).join(', ')
  return [
    `Sweep (static level): ${title}`,
    `${sweep.pointCount} points over ${axes}; boost gauge, units ${system === 'us' ? 'US' : 'metric'}.`,
    '',
    renderTable(header, body),
    '',
    CAUTION,
  ].join('\n')
}
