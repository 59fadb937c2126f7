import type { Scenario } from '../scenario.ts'
import type { HybridOutcome } from './hybrid-integrator.ts'
import type { PullFlags } from './pull-result.ts'
import { gasBudget } from './gas-budget.ts'
import { runPull } from './run-pull.ts'

export type DynamicPointStatus = 'ok' | 'never-opens' | 'open-at-zero-boost' | 'failed'

/** The compact dynamic metrics a sweep stores for one point (the dynamic twin of evaluateStaticPoint). */
export interface DynamicPointResult {
  /** 'failed' when the integration stopped early (its outcome says why). */
  status: DynamicPointStatus
  outcome: HybridOutcome
  crackBoostPa: number | null
  peakBoostPa: number | null
  settledBoostPa: number | null
  staticBoostAtSettledLiftPa: number | null
  overshootPa: number | null
  timeTo90PercentS: number | null
  creepPa: number | null
  peakDrivePa: number | null
  driveRatioSeen: number | null
  maxLiftFraction: number | null
  gasUsedPerPullKg: number | null
  pullsPerSupply: number | null
  /** Peak-to-peak swing of boost about its trend after the crack. */
  boostSwingPa: number | null
  /** What a regulated supply passes while armed at zero boost, every gate (gas budget); null on boost. */
  armedGasKgPerS: number | null
  /** The gas of the scenario's planned session (its pulls and armed time); null on boost. */
  sessionGasKg: number | null
  flags: PullFlags
  evaluations: number
}

const finiteOrNull = (v: number | null): number | null => (v !== null && Number.isFinite(v) ? v : null)

export function evaluateDynamicPoint(s: Scenario): DynamicPointResult {
  const pull = runPull(s)
  const m = pull.metrics
  const ok = pull.stats.outcome === 'converged'
  const status: DynamicPointStatus = !ok
    ? 'failed'
    : m.openAtStart
      ? 'open-at-zero-boost'
      : pull.flags.neverOpened
        ? 'never-opens'
        : 'ok'
  const budget = ok ? gasBudget(s, pull) : null
  return {
    status,
    outcome: pull.stats.outcome,
    crackBoostPa: finiteOrNull(m.crackBoostPa),
    peakBoostPa: finiteOrNull(m.peakBoostPa),
    settledBoostPa: finiteOrNull(m.settledBoostPa),
    staticBoostAtSettledLiftPa: finiteOrNull(m.staticBoostAtSettledLiftPa),
    overshootPa: finiteOrNull(m.overshootPa),
    timeTo90PercentS: finiteOrNull(m.timeTo90PercentS),
    creepPa: finiteOrNull(m.creepPa),
    peakDrivePa: finiteOrNull(m.peakDrivePa),
    driveRatioSeen: finiteOrNull(m.driveRatioSeen),
    maxLiftFraction: finiteOrNull(m.maxLiftFraction),
    gasUsedPerPullKg: finiteOrNull(m.gasUsedPerPullKg),
    pullsPerSupply: finiteOrNull(m.pullsPerSupply),
    boostSwingPa: finiteOrNull(m.boostSwingPa),
    armedGasKgPerS: budget === null ? null : finiteOrNull(budget.armedKgPerS),
    sessionGasKg: budget === null ? null : finiteOrNull(budget.session.kg),
    flags: pull.flags,
    evaluations: pull.stats.evaluations,
  }
}
