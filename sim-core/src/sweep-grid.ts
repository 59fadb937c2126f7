import { z } from 'zod'
import { computeBalance } from './balance.ts'
import { parseScenario, toFieldIssues, type FieldIssue, type Scenario } from './scenario.ts'

/**
 * A sweep (MODEL.md §6): a scenario plus up to three axes, each a numeric path into the scenario with a list or
 * a range of values. Points are the Cartesian product in a fixed order — the first axis slowest, the last
 * fastest — so any point can be recomputed alone from its index.
 */

export const MAX_AXES = 3
export const MAX_VALUES_PER_AXIS = 1000

const finite = z.number({ error: 'must be a number' }).finite({ error: 'must be a finite number' })

export const sweepAxisSchema = z
  .strictObject({
    /** Dotted path to a number in the scenario, e.g. `springs.0.seatForceN` or `exhaust.ratio`. */
    path: z.string({ error: 'is required' }).min(1, { error: 'is required' }).max(200),
    values: z
      .array(finite)
      .min(1, { error: 'needs at least one value' })
      .max(MAX_VALUES_PER_AXIS, { error: `takes at most ${MAX_VALUES_PER_AXIS} values` })
      .optional(),
    range: z
      .strictObject({
        from: finite,
        to: finite,
        count: z
          .number({ error: 'must be a number' })
          .int({ error: 'must be a whole number' })
          .gte(1, { error: 'must be at least 1' })
          .lte(MAX_VALUES_PER_AXIS, { error: `must be at most ${MAX_VALUES_PER_AXIS}` }),
      })
      .optional(),
  })
  .superRefine((axis, ctx) => {
    if ((axis.values === undefined) === (axis.range === undefined)) {
      ctx.addIssue({ code: 'custom', path: ['values'], message: 'give either values or a range, not both or neither' })
    }
  })

export const sweepLevelSchema = z.enum(['static', 'dynamic', 'both'])

export const sweepSpecSchema = z.strictObject({
  level: sweepLevelSchema.default('static'),
  axes: z
    .array(sweepAxisSchema)
    .min(1, { error: 'needs at least one axis' })
    .max(MAX_AXES, { error: `takes at most ${MAX_AXES} axes` }),
})

export type SweepAxisInput = z.output<typeof sweepAxisSchema>
export type SweepSpec = z.output<typeof sweepSpecSchema>
export type SweepLevel = z.output<typeof sweepLevelSchema>

/** An axis with its values spelled out. */
export interface ResolvedAxis {
  path: string
  values: number[]
}

export function axisValues(axis: SweepAxisInput): number[] {
  if (axis.values) return [...axis.values]
  const r = axis.range
  if (!r) return []
  if (r.count === 1) return [r.from]
  const step = (r.to - r.from) / (r.count - 1)
  // The last value is set exactly so a range ends where the user said, without rounding drift.
  return Array.from({ length: r.count }, (_, i) => (i === r.count - 1 ? r.to : r.from + i * step))
}

const splitPath = (path: string): string[] => path.split('.')

/** The value at a dotted path, or undefined when the path leads nowhere. */
export function getAtPath(root: unknown, path: string): unknown {
  let node: unknown = root
  for (const key of splitPath(path)) {
    if (node === null || typeof node !== 'object') return undefined
    if (!Object.prototype.hasOwnProperty.call(node, key)) return undefined
    node = (node as Record<string, unknown>)[key]
  }
  return node
}

/** A copy of `root` with the number at `path` replaced; the input is never mutated. */
export function setAtPath<T>(root: T, path: string, value: number): T {
  const keys = splitPath(path)
  const copy = (node: unknown, depth: number): unknown => {
    const key = keys[depth]
    if (key === undefined) return value
    if (Array.isArray(node)) {
      const out = [...node]
      out[Number(key)] = copy(node[Number(key)], depth + 1)
      return out
    }
    const obj = (node ?? {}) as Record<string, unknown>
    return { ...obj, [key]: copy(obj[key], depth + 1) }
  }
  return copy(root, 0) as T
}

export type ResolveResult = { ok: true; axes: ResolvedAxis[] } | { ok: false; issues: FieldIssue[] }

/**
 * Checks axes against a scenario: each path must lead to a number, no path twice, and every value must give
 * a valid scenario on its own (the message names the value, e.g. `axes.0.values.2`).
 */
export function resolveAxes(scenario: Scenario, axesInput: unknown): ResolveResult {
  const parsed = sweepSpecSchema.shape.axes.safeParse(axesInput)
  if (!parsed.success) return { ok: false, issues: toFieldIssues(parsed.error, 'axes') }
  const issues: FieldIssue[] = []
  const seen = new Set<string>()
  const axes = parsed.data.map((axis, i) => {
    const current = getAtPath(scenario, axis.path)
    if (typeof current !== 'number') {
      issues.push({ path: `axes.${i}.path`, message: `"${axis.path}" is not a number in this scenario` })
    } else if (seen.has(axis.path)) {
      issues.push({ path: `axes.${i}.path`, message: `"${axis.path}" is already swept by another axis` })
    }
    seen.add(axis.path)
    return { path: axis.path, values: axisValues(axis) }
  })
  if (issues.length > 0) return { ok: false, issues }
  axes.forEach((axis, i) => {
    axis.values.forEach((value, j) => {
      const check = parseScenario(setAtPath(scenario, axis.path, value))
      if (!check.ok) {
        const own = check.issues.find((issue) => issue.path === axis.path) ?? check.issues[0]
        const where = parsed.data[i]?.range ? `axes.${i}.range` : `axes.${i}.values.${j}`
        issues.push({ path: where, message: `${value} gives ${own?.path ?? axis.path} that ${own?.message ?? 'is not valid'}` })
      }
    })
  })
  return issues.length > 0 ? { ok: false, issues } : { ok: true, axes }
}

export function countPoints(axes: readonly ResolvedAxis[]): number {
  return axes.reduce((n, axis) => n * axis.values.length, 1)
}

/** Index of each axis's value for point `index` (first axis slowest). */
export function coordinatesOf(axes: readonly ResolvedAxis[], index: number): number[] {
  const total = countPoints(axes)
  if (!Number.isInteger(index) || index < 0 || index >= total) {
    throw new RangeError(`point index ${index} is outside 0…${total - 1}`)
  }
  const coords = new Array<number>(axes.length)
  let rest = index
  for (let a = axes.length - 1; a >= 0; a--) {
    const n = axes[a]!.values.length
    coords[a] = rest % n
    rest = Math.floor(rest / n)
  }
  return coords
}

export interface SweepPoint {
  index: number
  /** Index into each axis's values. */
  coords: number[]
  /** The axis values of this point, SI. */
  values: number[]
  scenario: Scenario
}

/** Point `index` of a sweep, recomputable alone. */
export function pointAt(scenario: Scenario, axes: readonly ResolvedAxis[], index: number): SweepPoint {
  const coords = coordinatesOf(axes, index)
  let s = scenario
  const values = axes.map((axis, a) => {
    const value = axis.values[coords[a]!]!
    s = setAtPath(s, axis.path, value)
    return value
  })
  return { index, coords, values, scenario: s }
}

export type StaticPointStatus = 'ok' | 'never-opens' | 'open-at-zero-boost'

export interface StaticPointResult {
  status: StaticPointStatus
  crackBoostPa: number | null
  fullOpenBoostPa: number | null
}

/** The static metrics a sweep stores for one point. */
export function evaluateStaticPoint(s: Scenario): StaticPointResult {
  const b = computeBalance(s)
  const value = (o: typeof b.crack) => (o.status === 'opens' ? o.boostPa : null)
  const status: StaticPointStatus = b.crack.status === 'opens' ? 'ok' : b.crack.status
  return { status, crackBoostPa: value(b.crack), fullOpenBoostPa: value(b.fullOpen) }
}
