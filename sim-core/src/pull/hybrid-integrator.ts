import { Outcome, Solver } from 'odex'

/**
 * Integrates a system whose right-hand side changes at events (a valve meeting its seat or its stop, a
 * compressor switching): MODEL.md §4 Integration. odex has no event location, so each accepted step's end is
 * checked in the output callback; when a guard has turned positive the instant is found by bisection on the
 * step's dense interpolant, the event is applied, and the integration restarts from there. The same driver
 * runs a fixed-step RK4 (with a cubic Hermite interpolant) for comparison runs.
 *
 * Running out of steps or of restarts is a returned outcome with statistics; only bad options throw.
 */

export interface HybridSystem<M> {
  readonly size: number
  /** dy/dt in mode `mode`. */
  derivative(t: number, y: readonly number[], mode: M): number[]
  /** The same into `out`; lets odex, which copies the result at once, run without an allocation per call. */
  derivativeInto?(t: number, y: readonly number[], mode: M, out: number[]): void
  /** Guard values of the mode; an event fires when one turns from ≤ 0 to > 0. */
  guards(t: number, y: readonly number[], mode: M): readonly number[]
  /**
   * Points inside each step at which to check the guards as well, so that a guard that turns positive and back
   * within one step (a valve just touching its stop) is still caught. Worth it only where guards are cheap.
   */
  interiorChecks?(mode: M): number
  /** The state and mode just after guard `index` fired at (t, y). */
  onEvent(t: number, y: readonly number[], mode: M, index: number): { y: number[]; mode: M }
  /** Crossings to locate (≤ 0 to > 0) that do not change the system, e.g. the valve's crack threshold. */
  watches?(t: number, y: readonly number[], mode: M): readonly number[]
}

export type IntegratorChoice = { kind: 'odex' } | { kind: 'rk4'; stepS: number }

export interface HybridOptions<M> {
  startS: number
  endS: number
  y0: readonly number[]
  mode0: M
  /** Samples are delivered at startS + k·sampleIntervalS and at endS. */
  sampleIntervalS: number
  relativeTolerance: number
  absoluteTolerance: readonly number[]
  maxStepS: number
  /** Step budget over the whole run, restarts included. */
  maxSteps: number
  /** Events beyond this many end the run with outcome 'too-many-events' (a valve chattering on its seat). */
  maxRestarts: number
  integrator: IntegratorChoice
  onSample(t: number, y: readonly number[], mode: M): void
  onWatch?(index: number, t: number, y: readonly number[], mode: M): void
  onEvent?(t: number, index: number, before: M, after: M): void
}

export type HybridOutcome = 'converged' | 'max-steps' | 'too-many-events'

export interface HybridStats {
  outcome: HybridOutcome
  /** Accepted steps. */
  steps: number
  rejected: number
  /** Right-hand-side evaluations, counted here (odex's own count omits its dense-output calls). */
  evaluations: number
  /** Guard evaluations: at step ends, inside steps, and while locating events. */
  guardChecks: number
  restarts: number
  /** Smallest accepted step, s, leaving out the first of each segment and steps cut short by an event or the end. */
  smallestStepS: number
}

export interface HybridResult<M> {
  stats: HybridStats
  /** Time reached: endS unless the run stopped early. */
  reachedS: number
  y: number[]
  mode: M
}

/** Interpolant of one step: component c at time t inside the step. */
type Dense = (c: number, t: number) => number

const BISECTION_ITERATIONS = 48
const MAX_CHAINED_EVENTS = 4

function requireOption(name: string, ok: boolean, value: unknown): void {
  if (!ok) throw new RangeError(`${name} is not valid: ${String(value)}`)
}

function validate<M>(system: HybridSystem<M>, o: HybridOptions<M>): void {
  requireOption('startS', Number.isFinite(o.startS), o.startS)
  requireOption('endS', Number.isFinite(o.endS) && o.endS > o.startS, o.endS)
  requireOption('y0', o.y0.length === system.size && o.y0.every(Number.isFinite), o.y0)
  requireOption('sampleIntervalS', o.sampleIntervalS > 0 && Number.isFinite(o.sampleIntervalS), o.sampleIntervalS)
  requireOption('relativeTolerance', o.relativeTolerance > 0 && o.relativeTolerance < 1, o.relativeTolerance)
  requireOption(
    'absoluteTolerance',
    o.absoluteTolerance.length === system.size && o.absoluteTolerance.every((a) => a > 0 && Number.isFinite(a)),
    o.absoluteTolerance,
  )
  requireOption('maxStepS', o.maxStepS > 0 && Number.isFinite(o.maxStepS), o.maxStepS)
  requireOption('maxSteps', Number.isInteger(o.maxSteps) && o.maxSteps > 0, o.maxSteps)
  requireOption('maxRestarts', Number.isInteger(o.maxRestarts) && o.maxRestarts >= 0, o.maxRestarts)
  if (o.integrator.kind === 'rk4') {
    requireOption('integrator.stepS', o.integrator.stepS > 0 && Number.isFinite(o.integrator.stepS), o.integrator.stepS)
  }
}

export function integrateHybrid<M>(system: HybridSystem<M>, o: HybridOptions<M>): HybridResult<M> {
  validate(system, o)
  const n = system.size
  const stats: HybridStats = {
    outcome: 'converged',
    steps: 0,
    rejected: 0,
    evaluations: 0,
    guardChecks: 0,
    restarts: 0,
    smallestStepS: Infinity,
  }
  let mode = o.mode0
  const f = (t: number, y: number[]): number[] => {
    stats.evaluations++
    return system.derivative(t, y, mode)
  }
  const into = system.derivativeInto
  const scratch = new Array<number>(n).fill(0)
  const fShared =
    into === undefined
      ? f
      : (t: number, y: number[]): number[] => {
          stats.evaluations++
          into(t, y, mode, scratch)
          return scratch
        }
  const guardsAt = (t: number, y: readonly number[]): readonly number[] => {
    stats.guardChecks++
    return system.guards(t, y, mode)
  }
  const watchesAt = (t: number, y: readonly number[]): readonly number[] =>
    system.watches ? system.watches(t, y, mode) : []

  // Sample k sits at startS + k·dt; the last one is endS itself.
  const span = o.endS - o.startS
  const sampleCount = Math.floor(span / o.sampleIntervalS + 1e-9) + 1
  const lastIsEnd = Math.abs((sampleCount - 1) * o.sampleIntervalS - span) <= 1e-9 * Math.max(1, span)
  const totalSamples = lastIsEnd ? sampleCount : sampleCount + 1
  const sampleTime = (k: number) => (k === totalSamples - 1 ? o.endS : o.startS + k * o.sampleIntervalS)
  let nextSample = 0

  const stateAt = (dense: Dense, t: number): number[] => {
    const y = new Array<number>(n)
    for (let c = 0; c < n; c++) y[c] = dense(c, t)
    return y
  }
  const emitSamplesThrough = (tLimit: number, dense: Dense) => {
    while (nextSample < totalSamples && sampleTime(nextSample) <= tLimit) {
      const t = sampleTime(nextSample)
      o.onSample(t, stateAt(dense, t), mode)
      nextSample++
    }
  }

  /** First crossing (≤ 0 → > 0) of one of `values` in [a, b]: returns the right end of the final bracket. */
  const locate = (
    a: number,
    b: number,
    dense: Dense,
    crossed: readonly number[],
    valuesAt: (t: number, y: readonly number[]) => readonly number[],
  ): { t: number; index: number } => {
    let best = { t: b, index: crossed[0]! }
    for (const index of crossed) {
      let lo = a
      let hi = best.t
      const at = (t: number) => valuesAt(t, stateAt(dense, t))[index]!
      if (!(at(hi) > 0)) continue
      for (let i = 0; i < BISECTION_ITERATIONS && hi - lo > 1e-13 * Math.max(1, Math.abs(hi)); i++) {
        const mid = 0.5 * (lo + hi)
        if (at(mid) > 0) hi = mid
        else lo = mid
      }
      if (hi < best.t || (hi === best.t && index < best.index)) best = { t: hi, index }
    }
    return best
  }

  const crossings = (before: readonly number[], after: readonly number[]): number[] => {
    const out: number[] = []
    for (let i = 0; i < after.length; i++) if ((before[i] ?? 0) <= 0 && after[i]! > 0) out.push(i)
    return out
  }

  let t0 = o.startS
  let y0 = [...o.y0]
  let prevGuards = guardsAt(t0, y0)
  let prevWatches = watchesAt(t0, y0)
  let lastStepS = Math.min(o.maxStepS, 1e-4)
  let event: { t: number; y: number[]; index: number } | null = null

  /**
   * Handles one accepted step [tOld, t] with its interpolant. Returns false when an event ended the segment.
   */
  let firstOfSegment = true
  const acceptStep = (tOld: number, t: number, y: readonly number[], dense: Dense): boolean => {
    stats.steps++
    let guards = guardsAt(t, y)
    let fired = crossings(prevGuards, guards)
    let tEnd = t
    const checks = fired.length === 0 && system.interiorChecks ? system.interiorChecks(mode) : 0
    for (let k = 1; k <= checks; k++) {
      const tk = tOld + ((t - tOld) * k) / (checks + 1)
      const inside = guardsAt(tk, stateAt(dense, tk))
      const early = crossings(prevGuards, inside)
      if (early.length > 0) {
        guards = inside
        fired = early
        tEnd = tk
        break
      }
    }
    let tLimit = t
    if (fired.length > 0) {
      const hit = locate(tOld, tEnd, dense, fired, (tt, yy) => guardsAt(tt, yy))
      tLimit = hit.t
      event = { t: hit.t, y: stateAt(dense, hit.t), index: hit.index }
    } else {
      // The first step of a segment is odex finding its feet after a restart; a collapse shows in the steps after it.
      if (!firstOfSegment && t < o.endS && t - tOld < stats.smallestStepS) stats.smallestStepS = t - tOld
      lastStepS = t - tOld
    }
    if (system.watches && o.onWatch) {
      const watches = event ? watchesAt(tLimit, event.y) : watchesAt(t, y)
      const seen = crossings(prevWatches, watches)
      for (const index of seen) {
        const hit = locate(tOld, tLimit, dense, [index], watchesAt)
        o.onWatch(index, hit.t, stateAt(dense, hit.t), mode)
      }
      prevWatches = watches
    }
    emitSamplesThrough(tLimit, dense)
    prevGuards = guards
    firstOfSegment = false
    return event === null
  }

  o.onSample(t0, y0, mode)
  nextSample = 1

  while (true) {
    event = null
    firstOfSegment = true
    const budget = o.maxSteps - stats.steps - stats.rejected
    if (budget <= 0) {
      stats.outcome = 'max-steps'
      break
    }
    const segment =
      o.integrator.kind === 'odex'
        ? runOdexSegment(n, fShared, t0, y0, o, lastStepS, budget, acceptStep, stats)
        : runRk4Segment(n, f, t0, y0, o.endS, o.integrator.stepS, budget, acceptStep)
    const ev = event as { t: number; y: number[]; index: number } | null
    if (ev === null) {
      if (segment.reached) {
        t0 = o.endS
        y0 = segment.y
        break
      }
      stats.outcome = 'max-steps'
      t0 = segment.t
      y0 = segment.y
      break
    }
    // Apply the event, and any that the new mode fires at once (a valve that lands and is pushed off again).
    let { t, y, index } = ev
    let chained = 0
    while (true) {
      const before = mode
      const next = system.onEvent(t, y, mode, index)
      mode = next.mode
      y = next.y
      o.onEvent?.(t, index, before, mode)
      const g = guardsAt(t, y)
      const again = g.findIndex((v) => v > 0)
      if (again < 0 || ++chained >= MAX_CHAINED_EVENTS) {
        prevGuards = g
        break
      }
      index = again
    }
    prevWatches = watchesAt(t, y)
    stats.restarts++
    t0 = t
    y0 = y
    if (stats.restarts > o.maxRestarts) {
      stats.outcome = 'too-many-events'
      break
    }
    if (o.endS - t0 <= 1e-12 * Math.max(1, Math.abs(o.endS))) {
      // The event sits on the end of the run: finish with the final sample.
      emitSamplesThrough(o.endS, (c) => y0[c]!)
      t0 = o.endS
      break
    }
  }
  return { stats, reachedS: t0, y: y0, mode }
}

interface SegmentEnd {
  /** true when the segment reached endS (no event, no step limit). */
  reached: boolean
  t: number
  y: number[]
}

type AcceptStep = (tOld: number, t: number, y: readonly number[], dense: Dense) => boolean

function runOdexSegment<M>(
  n: number,
  f: (t: number, y: number[]) => number[],
  t0: number,
  y0: number[],
  o: HybridOptions<M>,
  initialStepS: number,
  budget: number,
  acceptStep: AcceptStep,
  stats: HybridStats,
): SegmentEnd {
  const solver = new Solver(n)
  solver.relativeTolerance = o.relativeTolerance
  solver.absoluteTolerance = [...o.absoluteTolerance]
  solver.maxStepSize = o.maxStepS
  solver.initialStepSize = Math.min(initialStepS, o.maxStepS)
  solver.maxSteps = budget
  solver.denseOutput = true
  // odex's stability check compares the change of each derivative over the first substeps with the state's own
  // scale. Just after a restart the valve's speed is zero, its scale is its absolute tolerance, and its
  // acceleration grows at once, so the check halves the step down to nanoseconds. The error estimate still
  // rejects unstable steps, and the step never exceeds maxStepS, so the check is switched off.
  const tunable = solver as typeof solver & { stabilityCheckCount: number }
  tunable.stabilityCheckCount = 0
  let tLast = t0
  let yLast = y0
  let stopped = false
  const result = solver.solve(f, t0, y0, o.endS, (nr, xOld, x, y, dense) => {
    if (nr === 1 || dense === undefined) return true
    tLast = x
    yLast = y
    if (!acceptStep(xOld, x, y, dense)) {
      stopped = true
      return false
    }
    return true
  })
  stats.rejected += result.nReject
  if (stopped) return { reached: false, t: tLast, y: yLast }
  if (result.outcome === Outcome.Converged) return { reached: true, t: o.endS, y: result.y }
  return { reached: false, t: tLast, y: yLast }
}

function runRk4Segment(
  n: number,
  f: (t: number, y: number[]) => number[],
  t0: number,
  y0: number[],
  endS: number,
  stepS: number,
  budget: number,
  acceptStep: AcceptStep,
): SegmentEnd {
  let t = t0
  let y = y0
  let k1 = f(t, y)
  const tmp = new Array<number>(n)
  for (let step = 0; step < budget; step++) {
    const remaining = endS - t
    if (remaining <= 1e-12 * Math.max(1, Math.abs(endS))) return { reached: true, t: endS, y }
    // A last step of less than 1 % of h would only add round-off; stretch the one before it instead.
    const h = remaining < 1.01 * stepS ? remaining : stepS
    for (let i = 0; i < n; i++) tmp[i] = y[i]! + 0.5 * h * k1[i]!
    const k2 = f(t + 0.5 * h, tmp)
    for (let i = 0; i < n; i++) tmp[i] = y[i]! + 0.5 * h * k2[i]!
    const k3 = f(t + 0.5 * h, tmp)
    for (let i = 0; i < n; i++) tmp[i] = y[i]! + h * k3[i]!
    const k4 = f(t + h, tmp)
    const y1 = new Array<number>(n)
    for (let i = 0; i < n; i++) y1[i] = y[i]! + (h / 6) * (k1[i]! + 2 * k2[i]! + 2 * k3[i]! + k4[i]!)
    const tEnd = h === remaining ? endS : t + h
    const f1 = f(tEnd, y1)
    const ya = y
    const fa = k1
    const ta = t
    // Cubic Hermite interpolant on the step from the values and slopes at both ends.
    const dense: Dense = (c, tt) => {
      const s = (tt - ta) / h
      const s2 = s * s
      const s3 = s2 * s
      return (
        (2 * s3 - 3 * s2 + 1) * ya[c]! +
        (s3 - 2 * s2 + s) * h * fa[c]! +
        (-2 * s3 + 3 * s2) * y1[c]! +
        (s3 - s2) * h * f1[c]!
      )
    }
    if (!acceptStep(ta, tEnd, y1, dense)) return { reached: false, t: tEnd, y: y1 }
    t = tEnd
    y = y1
    k1 = f1
  }
  return { reached: endS - t <= 1e-12 * Math.max(1, Math.abs(endS)), t, y }
}
