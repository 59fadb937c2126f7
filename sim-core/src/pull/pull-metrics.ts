import { boostAtLift, type WindowConditions } from '../balance.ts'
import { springTotals, wastegateAreas } from '../geometry.ts'
import type { Scenario } from '../scenario.ts'
import type { PullFlags, PullMetrics, PullSeries } from './pull-result.ts'

/** What a pull records beyond its series, for the metrics and flags. */
export interface PullRecord {
  series: PullSeries
  /** Per sample: Π0 − Π of the compressor, the pressure downstream of the valve, the closed-loop target. */
  zeroFlowMargin: number[]
  downstreamPa: number[]
  targetBoostPa: number[]
  /** Per sample, the valve on its full-lift stop. */
  atFullLift: boolean[]
  crack: { timeS: number; boostPa: number } | null
  /** The valve was off its seat when the pull started. */
  openAtStart: boolean
  /** Gas drawn from a CO₂ bottle or a tank; null when boost is the source. */
  gasUsedKg: number | null
  compressorOnS: number | null
  durationS: number
}

/** Boost scatter (RMS about a straight line) above which a pull counts as not settled: 0.05 psi (common practice, no source). */
export const SETTLED_BOOST_SCATTER_PA = 344.7
/** Lift scatter, as a share of the maximum lift, above which a pull counts as not settled. */
export const SETTLED_LIFT_SCATTER = 0.02
/** Boost short of its target by more than this (0.5 psi) when drive pressure alone opens the valve is flagged. */
export const HELD_OPEN_MARGIN_PA = 3447

/**
 * Boost that swings more than this (1 psi peak to peak, about its trend) in the settled window, through at least two
 * whole cycles, hunts: a tuner sees it on a gauge and in a log (common practice, no source).
 */
export const HUNTING_SWING_PA = 6894.757
/** Whole cycles about the trend that make a swing a hunt rather than one overshoot dying away. */
export const HUNTING_CYCLES = 2

const mean = (v: readonly number[]) => v.reduce((a, b) => a + b, 0) / v.length

/** Residuals of `v` about its least-squares line over `t`. */
function aboutLine(t: readonly number[], v: readonly number[]): number[] {
  const n = t.length
  const tm = mean(t)
  const vm = mean(v)
  let stt = 0
  let stv = 0
  for (let i = 0; i < n; i++) {
    stt += (t[i]! - tm) ** 2
    stv += (t[i]! - tm) * (v[i]! - vm)
  }
  const slope = stt > 0 ? stv / stt : 0
  return v.map((x, i) => x - vm - slope * (t[i]! - tm))
}

/** RMS residual of `v` about its least-squares line over `t`. */
function scatterAboutLine(t: readonly number[], v: readonly number[]): number {
  const r = aboutLine(t, v)
  return Math.sqrt(r.reduce((a, x) => a + x * x, 0) / r.length)
}

/**
 * How boost swings about its trend in the window: peak to peak, and whole cycles a second (crossings of the trend,
 * with a hysteresis of a tenth of the swing so sampling noise does not count, over two a cycle).
 */
function swingAboutLine(t: readonly number[], v: readonly number[]): { swing: number; cyclesPerS: number; cycles: number } {
  const r = aboutLine(t, v)
  const swing = Math.max(...r) - Math.min(...r)
  const band = 0.05 * swing
  let side = 0
  let crossings = 0
  for (const x of r) {
    const now = x > band ? 1 : x < -band ? -1 : 0
    if (now !== 0 && side !== 0 && now !== side) crossings++
    if (now !== 0) side = now
  }
  const cycles = crossings / 2
  const span = t[t.length - 1]! - t[0]!
  return { swing, cycles, cyclesPerS: span > 0 ? cycles / span : 0 }
}

/** First time the series reaches `level`, interpolated between samples; null when it never does. */
function firstReach(t: readonly number[], v: readonly number[], level: number): number | null {
  for (let i = 0; i < v.length; i++) {
    if (v[i]! >= level) {
      if (i === 0) return t[0]!
      const a = v[i - 1]!
      return t[i - 1]! + ((t[i]! - t[i - 1]!) * (level - a)) / (v[i]! - a)
    }
  }
  return null
}

export interface SupplyFigures {
  pullsPerSupply: number | null
  keepsUp: boolean
  /** Gauge pressure the regulator needs at its inlet to hold the setpoint (setpoint + droop). */
  holdPa: number | null
}

export function pullMetrics(
  s: Scenario,
  r: PullRecord,
  supply: SupplyFigures,
): { metrics: PullMetrics; flags: PullFlags } {
  const { series } = r
  const t = series.timeS
  const boost = series.boostPa
  const lift = series.liftM
  const xMax = s.wastegate.maxLiftM
  const n = t.length

  // Settling window: from settlingDelayS after the crack to the end of the pull.
  let settledBoostPa: number | null = null
  let settledLiftM: number | null = null
  let notSettled = true
  let driveRatioSeen: number | null = null
  let windowDrive = 0
  let windowBoost = 0
  let windowIndices: number[] = []
  let boostSwingPa: number | null = null
  let huntHz: number | null = null
  if (r.crack) {
    const start = r.crack.timeS + s.solver.settlingDelayS
    const idx: number[] = []
    for (let i = 0; i < n; i++) if (t[i]! >= start - 1e-12) idx.push(i)
    // Fewer than five samples, or a window cut short by an early stop, is no window to judge by.
    if (idx.length >= 5 && Math.abs(t[n - 1]! - r.durationS) <= 1e-9 * Math.max(1, r.durationS)) {
      const tw = idx.map((i) => t[i]!)
      const bw = idx.map((i) => boost[i]!)
      const xw = idx.map((i) => lift[i]!)
      windowIndices = idx
      settledBoostPa = mean(bw)
      settledLiftM = mean(xw)
      windowBoost = settledBoostPa
      windowDrive = mean(idx.map((i) => series.drivePa[i]!))
      notSettled = scatterAboutLine(tw, bw) > SETTLED_BOOST_SCATTER_PA || scatterAboutLine(tw, xw) > SETTLED_LIFT_SCATTER * xMax
      const swing = swingAboutLine(tw, bw)
      boostSwingPa = swing.swing
      if (swing.swing > HUNTING_SWING_PA && swing.cycles >= HUNTING_CYCLES) huntHz = swing.cyclesPerS
    }
  }

  let peakBoostPa = -Infinity
  let peakAt = 0
  for (let i = 0; i < n; i++) {
    if (boost[i]! > peakBoostPa) {
      peakBoostPa = boost[i]!
      peakAt = i
    }
  }
  const peakDrivePa = Math.max(...series.drivePa)
  if (settledBoostPa !== null && windowBoost > 0) driveRatioSeen = windowDrive / windowBoost
  else if (boost[peakAt]! > 0) driveRatioSeen = series.drivePa[peakAt]! / boost[peakAt]!

  // The static balance at the settled lift, under what the pull held in the window: the drive-to-boost ratio it
  // showed (a ratio table, the drive needed to pass the exhaust, or the turbine's own), the duty a closed loop
  // settled on, what the regulator delivered and the pressure downstream of the valve.
  let staticBoostAtSettledLiftPa: number | null = null
  if (settledLiftM !== null) {
    const ratio = windowBoost <= 0 ? s.exhaust.ratio : (windowDrive - s.exhaust.driveAtZeroBoostPa) / windowBoost
    const held: WindowConditions = {
      ratio,
      duty: mean(windowIndices.map((i) => series.duty[i]!)),
      downstreamPa: mean(windowIndices.map((i) => r.downstreamPa[i]!)),
    }
    if (s.supply.kind !== 'boost') held.suppliedPa = mean(windowIndices.map((i) => series.regulatedPa[i]!))
    const b = boostAtLift(s, settledLiftM, held)
    staticBoostAtSettledLiftPa = b.status === 'opens' ? b.boostPa : null
  }

  // Creep: the largest boost rise over a stretch with the valve on its full-lift stop.
  let creepPa: number | null = null
  for (let i = 0; i < n; i++) {
    if (!r.atFullLift[i]) continue
    let j = i
    let top = boost[i]!
    while (j + 1 < n && r.atFullLift[j + 1]) top = Math.max(top, boost[++j]!)
    creepPa = Math.max(creepPa ?? 0, top - boost[i]!)
    i = j
  }

  const supplyKind = s.supply.kind
  let tankStartPa: number | null = null
  let tankEndPa: number | null = null
  let tankMinPa: number | null = null
  if (supplyKind === 'compressor') {
    tankStartPa = series.supplyPa[0]!
    tankEndPa = series.supplyPa[n - 1]!
    tankMinPa = Math.min(...series.supplyPa)
  }

  // Flags.
  const areas = wastegateAreas(s.wastegate)
  const { seatForceN, rateNPerM } = springTotals(s.springs, areas)
  const staticCrack = boostAtLift(s, 0)
  const staticCrackPa = staticCrack.status === 'opens' ? staticCrack.boostPa : null
  let heldOpenByDrive = false
  let supplyBelowSetpoint = false
  let pastZeroFlowLine = false
  let targetReached = false
  const setpoint = s.supply.kind === 'boost' ? null : s.supply.regulatorSetpointPa
  for (let i = 0; i < n; i++) {
    if (r.zeroFlowMargin[i]! <= 0 && boost[i]! > 0) pastZeroFlowLine = true
    if (setpoint !== null && series.regulatedPa[i]! < setpoint - 1e-6 * Math.max(1, setpoint)) supplyBelowSetpoint = true
    // The target is the closed loop's, or else the static crack boost; only the run-up to it counts.
    const target = s.control.kind === 'closed-loop' ? r.targetBoostPa[i]! : staticCrackPa
    if (target === null || targetReached) continue
    if (boost[i]! >= target - HELD_OPEN_MARGIN_PA) {
      targetReached = true
      continue
    }
    if (lift[i]! > s.wastegate.crackThresholdM) {
      const driveForce = series.drivePa[i]! * areas.valveM2 - r.downstreamPa[i]! * areas.valveBackM2
      if (driveForce >= seatForceN + rateNPerM * lift[i]!) heldOpenByDrive = true
    }
  }

  const metrics: PullMetrics = {
    crackBoostPa: r.crack?.boostPa ?? null,
    openAtStart: r.openAtStart,
    crackTimeS: r.crack?.timeS ?? null,
    peakBoostPa,
    settledBoostPa,
    settledLiftM,
    staticBoostAtSettledLiftPa,
    overshootPa: settledBoostPa === null ? null : Math.max(0, peakBoostPa - settledBoostPa),
    timeTo90PercentS: settledBoostPa === null || settledBoostPa <= 0 ? null : firstReach(t, boost, 0.9 * settledBoostPa),
    creepPa,
    boostSwingPa,
    huntingHz: huntHz,
    peakDrivePa,
    driveRatioSeen,
    maxLiftFraction: Math.max(...lift) / xMax,
    gasUsedPerPullKg: r.gasUsedKg,
    pullsPerSupply: supply.pullsPerSupply,
    compressorDuty: r.compressorOnS === null ? null : r.compressorOnS / r.durationS,
    tankStartPa,
    tankEndPa,
    tankMinPa,
  }
  const flags: PullFlags = {
    overBoostLimit: s.boostLimitPa !== undefined && peakBoostPa > s.boostLimitPa,
    heldOpenByDrive,
    supplyBelowSetpoint,
    pastZeroFlowLine,
    neverOpened: r.crack === null && !r.openAtStart,
    notSettled,
    hunting: huntHz !== null,
    portLag: false,
    targetUnreachable: false,
    supplyKeepsUp: supply.keepsUp,
  }
  return { metrics, flags }
}
