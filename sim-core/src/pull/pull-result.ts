import type { HybridOutcome } from './hybrid-integrator.ts'

/** The sampled series of a pull, one entry per sample; pressures gauge, Pa. */
export interface PullSeries {
  timeS: number[]
  rpm: number[]
  boostPa: number[]
  /** Exhaust manifold (drive) pressure. */
  drivePa: number[]
  liftM: number[]
  shaftSpeedRadS: number[]
  topPa: number[]
  bottomPa: number[]
  /** Regulator inlet: the CO₂ bottle or the tank; boost itself when boost is the source. */
  supplyPa: number[]
  /** What the regulator delivers to the ports (boost itself when boost is the source). */
  regulatedPa: number[]
  /** Solenoid duty, 0–1 (0 without a solenoid). */
  duty: number[]
}

/** The results of one pull a sweep stores (MODEL.md §5). Pressures gauge, Pa; null where not applicable. */
export interface PullMetrics {
  /** Boost when the lift first passes the crack threshold. */
  crackBoostPa: number | null
  /** The valve was already off its seat when the pull started (drive pressure at the starting boost beats the spring). */
  openAtStart: boolean
  crackTimeS: number | null
  peakBoostPa: number
  /** Mean boost over the settling window (from `settlingDelayS` after the crack to the end of the pull). */
  settledBoostPa: number | null
  settledLiftM: number | null
  /** The static balance at the settled lift, b_at(x_settled), which the settled boost should match. */
  staticBoostAtSettledLiftPa: number | null
  /** Peak boost above the settled boost. */
  overshootPa: number | null
  /** Time to 90 % of the settled boost. */
  timeTo90PercentS: number | null
  /** Boost rise while the valve sat fully open; null when it never reached full lift. */
  creepPa: number | null
  /** Peak-to-peak swing of boost about its trend in the settling window; null without a window. */
  boostSwingPa: number | null
  /** Cycles a second of a hunt (see flags.hunting); null when boost does not hunt. */
  huntingHz: number | null
  peakDrivePa: number
  /** Drive over boost (gauge over gauge) in the settling window, or at peak boost without one. */
  driveRatioSeen: number | null
  /** Largest lift over the maximum lift. */
  maxLiftFraction: number
  /**
   * Gas drawn from a CO₂ bottle or a tank in this pull, plus what refills the supply-fed chambers to their starting
   * state afterwards (so back-to-back pulls each cost this much).
   */
  gasUsedPerPullKg: number | null
  /**
   * CO₂: pulls a full bottle gives before it can no longer hold the setpoint. Compressor: back-to-back pulls
   * from this pull's starting tank pressure that hold the setpoint; null when the compressor keeps up for good.
   */
  pullsPerSupply: number | null
  /** Share of the pull the compressor ran. */
  compressorDuty: number | null
  tankStartPa: number | null
  tankEndPa: number | null
  tankMinPa: number | null
}

export interface PullFlags {
  /** Peak boost above the scenario's boost limit. */
  overBoostLimit: boolean
  /**
   * Before boost first reached its target (the closed loop's, or else the static crack boost), the valve was open
   * with drive pressure alone beating the spring.
   */
  heldOpenByDrive: boolean
  /** The regulator could not deliver its setpoint at some time in the pull. */
  supplyBelowSetpoint: boolean
  /** Boost reached the compressor's zero-flow line (surge risk). */
  pastZeroFlowLine: boolean
  /** The valve never passed the crack threshold. */
  neverOpened: boolean
  /** Boost or lift still scatter in the settling window, or there is no window to speak of. */
  notSettled: boolean
  /** Boost swings more than 1 psi about its trend, through two or more cycles, in the settling window. */
  hunting: boolean
  /** The pull cracked more than 0.3 psi above the static crack because the chambers trailed their ports. */
  portLag: boolean
  /** A closed loop's target lies outside what the gate holds between its duty limits. */
  targetUnreachable: boolean
  /** A compressor-fed supply keeps up with the draw indefinitely. */
  supplyKeepsUp: boolean
}

export interface PullStats {
  outcome: HybridOutcome
  steps: number
  rejected: number
  /** Right-hand-side evaluations by the integrator, counted in a wrapper. */
  evaluations: number
  /** Guard checks (step ends, inside steps, event location) and the sampled outputs' model evaluations. */
  auxiliaryEvaluations: number
  /** Restarts after events (valve at a stop, compressor switching). */
  restarts: number
  smallestStepS: number
  /** Time the pull reached (its duration unless it stopped early). */
  reachedS: number
  integrator: 'odex' | 'rk4'
  chambers: { top: 'full' | 'quasi-static'; bottom: 'full' | 'quasi-static' }
}

export interface PullResult {
  series: PullSeries
  metrics: PullMetrics
  flags: PullFlags
  stats: PullStats
  /** What the user should know to read this pull (model limits, cautions). */
  notes: string[]
}
