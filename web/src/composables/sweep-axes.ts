import { axisValues, getAtPath, MAX_AXES, MAX_VALUES_PER_AXIS, type Scenario } from '@crackpoint/sim-core'
import type { SweepAxisRequest } from '@/api/types'
import type { FieldQuantity } from './field-units'
import { parseNumberText } from './number-text'
import { describeField } from './scenario-fields'

export { MAX_AXES, MAX_VALUES_PER_AXIS }

/** A number of the scenario a sweep can vary. */
export interface SweepablePath {
  path: string
  title: string
  quantity: FieldQuantity
  /** The scenario's own value, SI. */
  current: number
}

/** Offered first: what a shop tunes most. */
const COMMON = ['springs.0.seatForceN', 'springs.0.benchCrackPressurePa', 'supply.regulatorSetpointPa', 'exhaust.ratio']

/** Every number the scenario holds, by dotted path, common ones first, the rest in the scenario's order. */
export function sweepablePaths(scenario: Scenario): SweepablePath[] {
  const found: SweepablePath[] = []
  const walk = (node: unknown, path: string): void => {
    if (typeof node === 'number') {
      const field = describeField(path)
      found.push({ path, title: field?.name ?? path, quantity: field?.quantity ?? 'plain', current: node })
    } else if (node !== null && typeof node === 'object') {
      for (const [key, value] of Object.entries(node)) walk(value, path ? `${path}.${key}` : key)
    }
  }
  walk(scenario, '')
  const rank = (p: SweepablePath) => {
    const i = COMMON.indexOf(p.path)
    return i === -1 ? COMMON.length : i
  }
  return found.map((p, order) => ({ p, order })).sort((a, b) => rank(a.p) - rank(b.p) || a.order - b.order).map(({ p }) => p)
}

/** One axis as the builder holds it: SI numbers, and the list as typed (in the user's units). */
export interface AxisDraft {
  path: string
  mode: 'range' | 'list'
  from: number
  to: number
  count: number
  /** The list as typed, in the unit shown beside it. */
  listText: string
}

/**
 * Splits a typed list: values are separated by semicolons, spaces, or a comma followed by a space, so a
 * comma between digits still reads as a decimal mark ("1,5" is one and a half).
 */
export function splitValueList(text: string): string[] {
  return text
    .trim()
    .replace(/[,;]+$/, '')
    .split(/\s*;\s*|\s*,\s+|\s+/)
    .filter((part) => part !== '')
}

export interface AxisCheck {
  /** The axis's values, SI, when it is valid. */
  values: number[] | null
  errors: { from?: string; to?: string; count?: string; list?: string; path?: string }
}

/** Checks one axis; `toSI` converts a shown number of the axis's quantity into SI. */
export function checkAxis(draft: AxisDraft, toSI: (shown: number) => number, paths: readonly SweepablePath[]): AxisCheck {
  const errors: AxisCheck['errors'] = {}
  if (!paths.some((p) => p.path === draft.path)) errors.path = 'pick a number of this scenario'
  if (draft.mode === 'range') {
    if (!Number.isFinite(draft.from)) errors.from = 'needs a number'
    if (!Number.isFinite(draft.to)) errors.to = 'needs a number'
    if (!Number.isInteger(draft.count) || draft.count < 1 || draft.count > MAX_VALUES_PER_AXIS) {
      errors.count = `a whole number from 1 to ${MAX_VALUES_PER_AXIS}`
    }
    if (Object.keys(errors).length > 0) return { values: null, errors }
    return { values: axisValues({ path: draft.path, range: { from: draft.from, to: draft.to, count: draft.count } }), errors }
  }
  const parts = splitValueList(draft.listText)
  if (parts.length === 0) errors.list = 'needs at least one value'
  else if (parts.length > MAX_VALUES_PER_AXIS) errors.list = `takes at most ${MAX_VALUES_PER_AXIS} values`
  const shown = parts.map(parseNumberText)
  const bad = parts.find((_, i) => !Number.isFinite(shown[i]))
  if (bad !== undefined) errors.list = `"${bad}" is not a number`
  if (Object.keys(errors).length > 0) return { values: null, errors }
  return { values: shown.map(toSI), errors }
}

/** Paths used by more than one axis: sim-core refuses a sweep that varies a number twice. */
export function repeatedPaths(drafts: readonly AxisDraft[]): Set<number> {
  const repeated = new Set<number>()
  drafts.forEach((d, i) => {
    if (drafts.findIndex((other) => other.path === d.path) !== i) repeated.add(i)
  })
  return repeated
}

/** The request body's axis: a range as a range (the server spells it out), a list as its SI values. */
export function axisRequest(draft: AxisDraft, values: number[]): SweepAxisRequest {
  return draft.mode === 'range' ? { path: draft.path, range: { from: draft.from, to: draft.to, count: draft.count } } : { path: draft.path, values }
}

/** A starting axis over a path: 70 % to 130 % of the scenario's value in five steps (1 to 2 for a ratio). */
export function defaultAxis(scenario: Scenario, path: string): AxisDraft {
  const current = getAtPath(scenario, path)
  const value = typeof current === 'number' ? current : 0
  if (path === 'exhaust.ratio') return { path, mode: 'range', from: 1, to: 2, count: 5, listText: '' }
  const from = value === 0 ? 0 : value * 0.7
  const to = value === 0 ? 1 : value * 1.3
  return { path, mode: 'range', from, to, count: 5, listText: '' }
}
