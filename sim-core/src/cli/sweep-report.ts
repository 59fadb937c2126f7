import { evaluateDynamicPoint, type DynamicPointResult, type PullFlags } from '../pull/index.ts'
import { evaluateStaticPoint, pointAt, type StaticPointResult } from '../sweep-grid.ts'
import { formatQuantity, type UnitSystem } from '../units.ts'
import { CAUTION } from './describe.ts'
import { SweepPointError } from './failures.ts'
import type { SweepFile } from './input.ts'
import { displayUnitOfField, formatFieldValue } from './quantities.ts'
import { renderTable } from './table.ts'

export interface SweepRow {
  index: number
  /** Axis values, SI. */
  values: number[]
  static?: StaticPointResult
  dynamic?: DynamicPointResult
}

/**
 * Every point of a sweep at its level (static, dynamic or both), in index order. A point the model refuses or
 * fails on throws a SweepPointError that names the point and carries the model's error.
 */
export function runSweep(sweep: SweepFile): SweepRow[] {
  const withStatic = sweep.level !== 'dynamic'
  const withDynamic = sweep.level !== 'static'
  return Array.from({ length: sweep.pointCount }, (_, index) => {
    const point = pointAt(sweep.scenario, sweep.axes, index)
    try {
      return {
        index,
        values: point.values,
        ...(withStatic ? { static: evaluateStaticPoint(point.scenario) } : {}),
        ...(withDynamic ? { dynamic: evaluateDynamicPoint(point.scenario) } : {}),
      }
    } catch (error) {
      const where = sweep.axes.map((a, i) => `${a.path} = ${point.values[i]}`).join(', ')
      throw new SweepPointError(index, where, error)
    }
  })
}

const LEVEL_TEXT = { static: 'static level', dynamic: 'dynamic level', both: 'static and dynamic levels' } as const

const STATIC_STATUS = { ok: 'opens', 'never-opens': 'never opens', 'open-at-zero-boost': 'open at zero boost' } as const
const DYNAMIC_STATUS = { ...STATIC_STATUS, failed: 'failed' } as const

/** Short names of the flags that point at a problem (a compressor keeping up is good news, so it is left out). */
const FLAG_SHORT: Partial<Record<keyof PullFlags, string>> = {
  overBoostLimit: 'over limit',
  heldOpenByDrive: 'held open by drive',
  supplyBelowSetpoint: 'supply low',
  pastZeroFlowLine: 'surge risk',
  neverOpened: 'never opened',
  notSettled: 'not settled',
  hunting: 'hunts',
  portLag: 'port lag',
  targetUnreachable: 'target out of reach',
}

function flagText(flags: PullFlags): string {
  const raised = (Object.keys(FLAG_SHORT) as (keyof PullFlags)[]).filter((k) => flags[k]).map((k) => FLAG_SHORT[k])
  return raised.length === 0 ? '—' : raised.join(', ')
}

export function axisHeader(path: string, system: UnitSystem): string {
  const symbol = displayUnitOfField(path, system).symbol
  return symbol ? `${path} (${symbol})` : path
}

/** The points as a table: axis values in the user's units, then the static and/or dynamic results. */
export function renderSweep(title: string, sweep: SweepFile, rows: readonly SweepRow[], system: UnitSystem): string {
  const p = (pa: number | null | undefined) => (pa === null || pa === undefined ? '—' : formatQuantity('pressure', system, pa))
  const withStatic = sweep.level !== 'dynamic'
  const withDynamic = sweep.level !== 'static'
  const header = [
    '#',
    ...sweep.axes.map((a) => axisHeader(a.path, system)),
    ...(withStatic ? ['status', 'crack', 'full open'] : []),
    ...(withDynamic ? ['pull', 'pull crack', 'settled', 'peak', 'flags'] : []),
  ]
  const body = rows.map((r) => [
    String(r.index),
    ...r.values.map((v, i) => formatFieldValue(sweep.axes[i]?.path ?? '', system, v)),
    ...(r.static ? [STATIC_STATUS[r.static.status], p(r.static.crackBoostPa), p(r.static.fullOpenBoostPa)] : []),
    ...(r.dynamic
      ? [DYNAMIC_STATUS[r.dynamic.status], p(r.dynamic.crackBoostPa), p(r.dynamic.settledBoostPa), p(r.dynamic.peakBoostPa), flagText(r.dynamic.flags)]
      : []),
  ])
  const axes = sweep.axes.map((a) => `${a.path} × ${a.values.length}`).join(', ')
  return [
    `Sweep (${LEVEL_TEXT[sweep.level]}): ${title}`,
    `${sweep.pointCount} points over ${axes}; boost gauge, units ${system === 'us' ? 'US' : 'metric'}.`,
    '',
    renderTable(header, body),
    '',
    CAUTION,
  ].join('\n')
}
