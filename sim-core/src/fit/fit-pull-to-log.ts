import { levenbergMarquardt } from 'ml-levenberg-marquardt'
import type { HybridOutcome } from '../pull/hybrid-integrator.ts'
import { runPull } from '../pull/run-pull.ts'
import type { Scenario } from '../scenario.ts'
import { fitParametersOf, withFitParameters, type FitParameters } from './fit-parameters.ts'
import { interpolateSeries } from './interpolate-series.ts'

/**
 * Boost measured over one pull: time from the start of the pull (s) and boost, gauge (Pa); and drive pressure,
 * gauge (Pa), when the log has it (a back-pressure sensor): fitted alongside boost, it pins the drive-to-boost ratio
 * that boost alone only infers.
 */
export interface MeasuredBoost {
  timeS: readonly number[]
  boostPa: readonly number[]
  drivePa?: readonly number[] | null
}

export interface PullFitOptions {
  /** Range the ratio may take; default 0.8–3.0, within the scenario schema's 0.5–4. */
  ratioBounds?: readonly [number, number]
  /** Range the total seat force may take, N; default a quarter to four times the scenario's own. */
  seatForceBoundsN?: readonly [number, number]
  /** Where the search starts; default the scenario's own values, moved inside the bounds. */
  initial?: Partial<FitParameters>
  /** Levenberg–Marquardt iterations at most; default 30. */
  maxIterations?: number
  /** Pulls at most (each costs one dynamic pull); default 150. */
  maxEvaluations?: number
  /** Converged once a step moves both parameters by less than this fraction of their size; default 1e-4. */
  stepTolerance?: number
}

export type PullFitStop = 'small-step' | 'small-improvement' | 'no-improvement' | 'max-iterations' | 'max-evaluations'

export interface PullFitReport extends FitParameters {
  initial: FitParameters
  bounds: { ratio: [number, number]; seatForceN: [number, number] }
  /** The fitted value sits on its bound: the best answer may lie outside the range searched. */
  atBound: { ratio: boolean; seatForceN: boolean }
  /** Root mean square of measured − simulated boost over the compared points, Pa. */
  rmsResidualPa: number
  /** The same for drive pressure when the log has it (fitted alongside boost), else null. */
  driveRmsResidualPa: number | null
  initialRmsResidualPa: number
  /** rmsResidualPa over the root mean square of the measured boost. */
  relativeResidual: number
  /** relativeResidual above POOR_FIT_RELATIVE_RESIDUAL: the model does not explain this log with any pair searched. */
  poorFit: boolean
  iterations: number
  /** Dynamic pulls run. */
  evaluations: number
  converged: boolean
  stop: PullFitStop
  /** Measured points inside the pull (0 to its duration) that were compared, and those left out. */
  pointsCompared: number
  pointsOutside: number
  /** Outcome of the best pull's integration (a pull that ran out of steps holds its last boost). */
  pullOutcome: HybridOutcome
  /** The simulated boost of the best pull at the compared times. */
  fitted: { timeS: number[]; boostPa: number[] }
  notes: string[]
}

/**
 * Above this share of the measured boost's RMS the fit is reported as poor: gauge noise of a few per cent of the
 * boost stays well below it, a log of another shape does not (common practice, no source).
 */
export const POOR_FIT_RELATIVE_RESIDUAL = 0.15
/** Limits of the scenario schema: exhaust.ratio 0.5–4, a spring's seat force 0–5000 N. */
export const FIT_RATIO_LIMITS: readonly [number, number] = [0.5, 4]
export const FIT_SEAT_FORCE_LIMIT_N = 5000
const MIN_POINTS = 5
/** Forward-difference step in the scaled parameters: 0.1 % of each one's size, far above the pull's rtol of 1e-6. */
const GRADIENT_STEP = 1e-3
const COST_TOLERANCE = 1e-9
/** Damping past which no step, however short, lowers the cost: a minimum to the precision of the pull. */
const MAX_DAMPING_PER_POINT = 1e6

function checkBounds(name: string, value: readonly number[] | undefined, lo: number, hi: number): [number, number] | undefined {
  if (value === undefined) return undefined
  const [a, b] = value
  if (value.length !== 2 || a === undefined || b === undefined || !Number.isFinite(a) || !Number.isFinite(b) || !(a < b) || a < lo || b > hi) {
    throw new RangeError(`options.${name} must be [min, max] with ${lo} ≤ min < max ≤ ${hi}, not ${JSON.stringify(value)}`)
  }
  return [a, b]
}

function checkCount(name: string, value: number | undefined, lo: number, hi: number, fallback: number): number {
  if (value === undefined) return fallback
  if (!Number.isInteger(value) || value < lo || value > hi) {
    throw new RangeError(`options.${name} must be a whole number from ${lo} to ${hi}, not ${value}`)
  }
  return value
}

function checkMeasured(m: MeasuredBoost): void {
  if (!Array.isArray(m.timeS) || !Array.isArray(m.boostPa)) throw new RangeError('measured.timeS and measured.boostPa must be lists')
  if (m.timeS.length !== m.boostPa.length) {
    throw new RangeError(`measured.boostPa must have one value per time (${m.timeS.length}), not ${m.boostPa.length}`)
  }
  for (let i = 0; i < m.timeS.length; i++) {
    const t = m.timeS[i]!
    if (!Number.isFinite(t)) throw new RangeError(`measured.timeS[${i}] must be a finite number, not ${t}`)
    if (i > 0 && !(t > m.timeS[i - 1]!)) throw new RangeError(`measured.timeS[${i}] must be later than the time before it`)
    if (!Number.isFinite(m.boostPa[i]!)) throw new RangeError(`measured.boostPa[${i}] must be a finite number, not ${m.boostPa[i]}`)
  }
  const drive = m.drivePa
  if (drive === undefined || drive === null) return
  if (!Array.isArray(drive)) throw new RangeError('measured.drivePa must be a list')
  if (drive.length !== m.timeS.length) throw new RangeError(`measured.drivePa must have one value per time (${m.timeS.length}), not ${drive.length}`)
  for (let i = 0; i < drive.length; i++) {
    if (!Number.isFinite(drive[i]!)) throw new RangeError(`measured.drivePa[${i}] must be a finite number, not ${drive[i]}`)
  }
}

const clamp = (v: number, lo: number, hi: number) => Math.min(Math.max(v, lo), hi)

/**
 * Finds the drive-to-boost ratio and the total spring seat force whose dynamic pull (sim-core's runPull in ratio
 * mode) best explains a measured boost series, by bounded least squares with ml-levenberg-marquardt.
 *
 * The residuals are measured − simulated boost at the measured times inside the pull (the simulated series
 * interpolated linearly). Parameters and residuals are scaled to about 1 (each parameter by its starting value,
 * boost by the log's RMS) so the damping means the same for both. The optimiser's own loop keeps a step that
 * raises the cost and can only stop on a cost of zero, so it is driven one iteration at a time here: a step is
 * taken only if it lowers the cost, the damping shrinks after a kept step and grows after a refused one, and the
 * fit stops when a step is small, the cost stops falling, or no step lowers it. Pulls are cached by parameters,
 * so an iteration costs three pulls (two for the forward-difference Jacobian, one for the trial) and a refused
 * one only its trial.
 *
 * The pulls use the scenario's own sample interval: a coarser one saves next to nothing (the integrator's step
 * is capped at `solver.maxStepS` whatever the sampling, and about 4 ms per default pull were measured at 10, 20
 * and 50 ms samples alike) while it coarsens the interpolation.
 *
 * Pure: no I/O; the scenario is not changed. Bad options or a measured series that cannot be fitted throw a
 * RangeError naming the option; a fit that stops short says so in `converged` and `stop`.
 */
export function fitPullToLog(scenario: Scenario, measured: MeasuredBoost, options: PullFitOptions = {}): PullFitReport {
  checkMeasured(measured)
  const own = fitParametersOf(scenario)
  const forceLimit = FIT_SEAT_FORCE_LIMIT_N * scenario.springs.length
  const ratioBounds = checkBounds('ratioBounds', options.ratioBounds, FIT_RATIO_LIMITS[0], FIT_RATIO_LIMITS[1]) ?? [0.8, 3]
  const forceBounds =
    checkBounds('seatForceBoundsN', options.seatForceBoundsN, 0, forceLimit) ??
    (own.seatForceN > 0 ? [own.seatForceN / 4, Math.min(own.seatForceN * 4, forceLimit)] : [0, 1000])
  const maxIterations = checkCount('maxIterations', options.maxIterations, 1, 500, 30)
  const maxEvaluations = checkCount('maxEvaluations', options.maxEvaluations, 4, 5000, 150)
  const stepTolerance = options.stepTolerance ?? 1e-4
  if (!(stepTolerance > 0 && stepTolerance < 1)) throw new RangeError(`options.stepTolerance must be between 0 and 1, not ${stepTolerance}`)
  const start: FitParameters = {
    ratio: clamp(options.initial?.ratio ?? own.ratio, ratioBounds[0], ratioBounds[1]),
    seatForceN: clamp(options.initial?.seatForceN ?? own.seatForceN, forceBounds[0], forceBounds[1]),
  }
  if (!Number.isFinite(start.ratio)) throw new RangeError('options.initial.ratio must be a finite number')
  if (!Number.isFinite(start.seatForceN)) throw new RangeError('options.initial.seatForceN must be a finite number')

  const duration = scenario.engine.pullDurationS
  const times: number[] = []
  const observed: number[] = []
  const drive = measured.drivePa ?? null
  const observedDrive: number[] = []
  for (let i = 0; i < measured.timeS.length; i++) {
    const t = measured.timeS[i]!
    if (t < 0 || t > duration) continue
    times.push(t)
    observed.push(measured.boostPa[i]!)
    if (drive) observedDrive.push(drive[i]!)
  }
  if (times.length < MIN_POINTS) {
    throw new RangeError(
      `measured.timeS: only ${times.length} points lie within the pull (0 to ${duration} s, engine.pullDurationS); at least ${MIN_POINTS} are needed`,
    )
  }
  const n = times.length
  const boostScale = Math.max(Math.sqrt(observed.reduce((sum, b) => sum + b * b, 0) / n), 1000)
  const scale = [start.ratio, start.seatForceN > 0 ? start.seatForceN : forceBounds[1] / 2] as const
  const lower = [ratioBounds[0] / scale[0], forceBounds[0] / scale[1]]
  const upper = [ratioBounds[1] / scale[0], forceBounds[1] / scale[1]]
  const toParameters = (u: readonly number[]): FitParameters => ({ ratio: u[0]! * scale[0], seatForceN: u[1]! * scale[1] })

  // Residuals: boost at each compared time, then drive pressure there when the log has it, both over the same scale
  // (pascals weigh the same in either).
  const cache = new Map<string, { scaled: Float64Array; boostPa: number[]; drivePa: number[] | null; outcome: HybridOutcome }>()
  let evaluations = 0
  const simulate = (u: readonly number[]) => {
    const key = `${u[0]}|${u[1]}`
    const hit = cache.get(key)
    if (hit) return hit
    evaluations++
    const p = toParameters(u)
    // The gradient's probe may sit a step past a bound; it stays a valid pull as long as the force is not negative.
    const pull = runPull(withFitParameters(scenario, { ratio: p.ratio, seatForceN: Math.max(p.seatForceN, 0) }))
    const boostPa = interpolateSeries(pull.series.timeS, pull.series.boostPa, times)
    const drivePa = drive ? interpolateSeries(pull.series.timeS, pull.series.drivePa, times) : null
    const scaled = Float64Array.from(drivePa ? [...boostPa, ...drivePa] : boostPa, (b) => b / boostScale)
    const entry = { scaled, boostPa, drivePa, outcome: pull.stats.outcome }
    cache.set(key, entry)
    return entry
  }
  const targets = drive ? [...observed, ...observedDrive] : observed
  const data = { x: targets.map((_, i) => i), y: targets.map((b) => b / boostScale) }
  const m = data.y.length
  const model = (u: number[]) => {
    const predicted = simulate(u).scaled
    return (i: number) => predicted[i]!
  }
  const costOf = (u: readonly number[]) => {
    const predicted = simulate(u).scaled
    let sum = 0
    for (let i = 0; i < m; i++) sum += (data.y[i]! - predicted[i]!) ** 2
    return sum
  }

  let u = [1, start.seatForceN / scale[1]]
  let cost = costOf(u)
  let damping = 1e-3 * m
  let iterations = 0
  let stop: PullFitStop = 'max-iterations'
  for (;;) {
    if (iterations >= maxIterations) {
      stop = 'max-iterations'
      break
    }
    if (evaluations + 3 > maxEvaluations) {
      stop = 'max-evaluations'
      break
    }
    if (cost === 0) {
      stop = 'small-improvement'
      break
    }
    iterations++
    const step = u.map((v, k) => (v + GRADIENT_STEP > upper[k]! ? -GRADIENT_STEP : GRADIENT_STEP))
    const result = levenbergMarquardt(data, model, {
      initialValues: u,
      damping,
      maxIterations: 1,
      errorTolerance: 0,
      minValues: lower,
      maxValues: upper,
      gradientDifference: step,
    })
    if (result.parameterError < cost) {
      const moved = Math.max(...result.parameterValues.map((v, k) => Math.abs(v - u[k]!)))
      const gain = (cost - result.parameterError) / cost
      u = result.parameterValues
      cost = result.parameterError
      damping = Math.max(damping / 9, 1e-12)
      if (moved < stepTolerance) {
        stop = 'small-step'
        break
      }
      if (gain < COST_TOLERANCE) {
        stop = 'small-improvement'
        break
      }
    } else {
      damping *= 11
      if (damping > MAX_DAMPING_PER_POINT * m) {
        stop = 'no-improvement'
        break
      }
    }
  }

  const best = simulate(u)
  const fitted = toParameters(u)
  const rms = (measuredPa: readonly number[], simulatedPa: readonly number[]) =>
    Math.sqrt(measuredPa.reduce((sum, v, i) => sum + (v - simulatedPa[i]!) ** 2, 0) / measuredPa.length)
  const rmsResidualPa = rms(observed, best.boostPa)
  const driveRmsResidualPa = drive && best.drivePa ? rms(observedDrive, best.drivePa) : null
  const initialRmsResidualPa = rms(observed, simulate([1, start.seatForceN / scale[1]]).boostPa)
  const rmsMeasured = Math.sqrt(observed.reduce((sum, b) => sum + b * b, 0) / n)
  const relativeResidual = rmsMeasured > 0 ? rmsResidualPa / rmsMeasured : Number.POSITIVE_INFINITY
  const near = (v: number, bound: number, width: number) => Math.abs(v - bound) <= 1e-6 * width
  const atBound = {
    ratio: near(fitted.ratio, ratioBounds[0], ratioBounds[1] - ratioBounds[0]) || near(fitted.ratio, ratioBounds[1], ratioBounds[1] - ratioBounds[0]),
    seatForceN:
      near(fitted.seatForceN, forceBounds[0], forceBounds[1] - forceBounds[0]) || near(fitted.seatForceN, forceBounds[1], forceBounds[1] - forceBounds[0]),
  }
  const poorFit = relativeResidual > POOR_FIT_RELATIVE_RESIDUAL
  const notes: string[] = []
  if (scenario.exhaust.mode !== 'ratio') notes.push('The scenario is in turbine mode; the fit ran its pulls in ratio mode, where the ratio is an input.')
  if (poorFit) {
    notes.push(
      `The best pull still misses the log by ${(relativeResidual * 100).toFixed(0)} % of its boost (RMS): the model does not explain this log ` +
        'with any ratio and seat force searched. Check the column mapping, the units and the scenario before using these values.',
    )
  }
  if (atBound.ratio || atBound.seatForceN) notes.push('A fitted value sits on the edge of its range: the best answer may lie outside it.')
  if (drive) notes.push('The logged drive pressure was fitted alongside boost: it pins the drive-to-boost ratio.')
  if (times.length < measured.timeS.length) {
    notes.push(`${measured.timeS.length - times.length} measured points lie outside the pull (0 to ${duration} s) and were not compared.`)
  }
  return {
    ...fitted,
    initial: start,
    bounds: { ratio: [...ratioBounds], seatForceN: [...forceBounds] },
    atBound,
    rmsResidualPa,
    driveRmsResidualPa,
    initialRmsResidualPa,
    relativeResidual,
    poorFit,
    iterations,
    evaluations,
    converged: stop === 'small-step' || stop === 'small-improvement' || stop === 'no-improvement',
    stop,
    pointsCompared: n,
    pointsOutside: measured.timeS.length - n,
    pullOutcome: best.outcome,
    fitted: { timeS: times, boostPa: best.boostPa },
    notes,
  }
}
