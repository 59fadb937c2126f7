import {
  coordinatesOf,
  evaluateDynamicPoint,
  evaluateStaticPoint,
  pointAt,
  type DynamicPointResult,
  type ResolvedAxis,
  type Scenario,
} from '@crackpoint/sim-core';

export const SWEEP_LEVELS = ['static', 'dynamic', 'both'] as const;
export type SweepLevel = (typeof SWEEP_LEVELS)[number];

export type PointStatus = 'ok' | 'never-opens' | 'open-at-zero-boost' | 'failed';

/** One row of sweep_points as the worker writes it (snake_case, the table's own columns). */
export interface PointRow {
  sweep_id: string;
  point_index: number;
  axis0: number | null;
  axis1: number | null;
  axis2: number | null;
  status: PointStatus;
  crack_boost_pa: number | null;
  full_open_boost_pa: number | null;
  error: string | null;
  dynamic_status: PointStatus | null;
  dynamic_crack_boost_pa: number | null;
  peak_boost_pa: number | null;
  settled_boost_pa: number | null;
  static_boost_at_settled_lift_pa: number | null;
  overshoot_pa: number | null;
  time_to_90_percent_s: number | null;
  creep_pa: number | null;
  peak_drive_pa: number | null;
  drive_ratio_seen: number | null;
  max_lift_fraction: number | null;
  gas_used_per_pull_kg: number | null;
  pulls_per_supply: number | null;
  boost_swing_pa: number | null;
  armed_gas_kg_per_s: number | null;
  session_gas_kg: number | null;
  over_boost_limit: boolean | null;
  held_open_by_drive: boolean | null;
  supply_below_setpoint: boolean | null;
  past_zero_flow_line: boolean | null;
  not_settled: boolean | null;
  hunting: boolean | null;
  port_lag: boolean | null;
  target_unreachable: boolean | null;
  /** What the typed columns leave out: the integrator's outcome and work, the remaining flags (jsonb). */
  result: string | null;
}

/** Every column the upsert rewrites when a point is computed again. */
export const POINT_ROW_UPDATE_COLUMNS = [
  'axis0',
  'axis1',
  'axis2',
  'status',
  'crack_boost_pa',
  'full_open_boost_pa',
  'error',
  'dynamic_status',
  'dynamic_crack_boost_pa',
  'peak_boost_pa',
  'settled_boost_pa',
  'static_boost_at_settled_lift_pa',
  'overshoot_pa',
  'time_to_90_percent_s',
  'creep_pa',
  'peak_drive_pa',
  'drive_ratio_seen',
  'max_lift_fraction',
  'gas_used_per_pull_kg',
  'pulls_per_supply',
  'boost_swing_pa',
  'armed_gas_kg_per_s',
  'session_gas_kg',
  'over_boost_limit',
  'held_open_by_drive',
  'supply_below_setpoint',
  'past_zero_flow_line',
  'not_settled',
  'hunting',
  'port_lag',
  'target_unreachable',
  'result',
  'updated_at',
] as const;

const ERROR_TEXT_MAX = 500;

function finiteOrNull(value: number | null): number | null {
  return value !== null && Number.isFinite(value) ? value : null;
}

function messageOf(error: unknown): string {
  const message = error instanceof Error ? error.message : String(error);
  return message.slice(0, ERROR_TEXT_MAX) || 'the point could not be evaluated';
}

function emptyRow(sweepId: string, axes: readonly ResolvedAxis[], index: number): PointRow {
  const coords = coordinatesOf(axes, index);
  const axisValue = (a: number): number | null => {
    const axis = axes[a];
    const at = coords[a];
    return axis && at !== undefined ? (axis.values[at] ?? null) : null;
  };
  return {
    sweep_id: sweepId,
    point_index: index,
    axis0: axisValue(0),
    axis1: axisValue(1),
    axis2: axisValue(2),
    status: 'failed',
    crack_boost_pa: null,
    full_open_boost_pa: null,
    error: null,
    dynamic_status: null,
    dynamic_crack_boost_pa: null,
    peak_boost_pa: null,
    settled_boost_pa: null,
    static_boost_at_settled_lift_pa: null,
    overshoot_pa: null,
    time_to_90_percent_s: null,
    creep_pa: null,
    peak_drive_pa: null,
    drive_ratio_seen: null,
    max_lift_fraction: null,
    gas_used_per_pull_kg: null,
    pulls_per_supply: null,
    boost_swing_pa: null,
    armed_gas_kg_per_s: null,
    session_gas_kg: null,
    over_boost_limit: null,
    held_open_by_drive: null,
    supply_below_setpoint: null,
    past_zero_flow_line: null,
    not_settled: null,
    hunting: null,
    port_lag: null,
    target_unreachable: null,
    result: null,
  };
}

function dynamicColumns(result: DynamicPointResult): Partial<PointRow> {
  return {
    dynamic_status: result.status,
    dynamic_crack_boost_pa: finiteOrNull(result.crackBoostPa),
    peak_boost_pa: finiteOrNull(result.peakBoostPa),
    settled_boost_pa: finiteOrNull(result.settledBoostPa),
    static_boost_at_settled_lift_pa: finiteOrNull(result.staticBoostAtSettledLiftPa),
    overshoot_pa: finiteOrNull(result.overshootPa),
    time_to_90_percent_s: finiteOrNull(result.timeTo90PercentS),
    creep_pa: finiteOrNull(result.creepPa),
    peak_drive_pa: finiteOrNull(result.peakDrivePa),
    drive_ratio_seen: finiteOrNull(result.driveRatioSeen),
    max_lift_fraction: finiteOrNull(result.maxLiftFraction),
    gas_used_per_pull_kg: finiteOrNull(result.gasUsedPerPullKg),
    pulls_per_supply: finiteOrNull(result.pullsPerSupply),
    boost_swing_pa: finiteOrNull(result.boostSwingPa),
    armed_gas_kg_per_s: finiteOrNull(result.armedGasKgPerS),
    session_gas_kg: finiteOrNull(result.sessionGasKg),
    over_boost_limit: result.flags.overBoostLimit,
    held_open_by_drive: result.flags.heldOpenByDrive,
    supply_below_setpoint: result.flags.supplyBelowSetpoint,
    past_zero_flow_line: result.flags.pastZeroFlowLine,
    not_settled: result.flags.notSettled,
    hunting: result.flags.hunting,
    port_lag: result.flags.portLag,
    target_unreachable: result.flags.targetUnreachable,
    result: JSON.stringify({ dynamic: { outcome: result.outcome, evaluations: result.evaluations, flags: result.flags } }),
  };
}

/**
 * One point at the sweep's level. A point the model cannot evaluate is recorded as failed with its
 * reason, never thrown, so one bad corner of a sweep does not stop the rest. At the level 'both' the
 * point is failed when either level failed, and keeps what the other level found.
 */
export function computePointRow(
  sweepId: string,
  scenario: Scenario,
  axes: readonly ResolvedAxis[],
  index: number,
  level: SweepLevel = 'static',
): PointRow {
  let row = emptyRow(sweepId, axes, index);
  let pointScenario: Scenario;
  try {
    pointScenario = pointAt(scenario, axes, index).scenario;
  } catch (error) {
    return { ...row, error: messageOf(error) };
  }

  let staticStatus: PointStatus | null = null;
  if (level !== 'dynamic') {
    try {
      const result = evaluateStaticPoint(pointScenario);
      const crack = finiteOrNull(result.crackBoostPa);
      const fullOpen = finiteOrNull(result.fullOpenBoostPa);
      if (crack !== result.crackBoostPa || fullOpen !== result.fullOpenBoostPa) {
        return { ...row, error: 'the model gave a non-finite boost' };
      }
      staticStatus = result.status;
      row = { ...row, crack_boost_pa: crack, full_open_boost_pa: fullOpen };
    } catch (error) {
      return { ...row, error: messageOf(error) };
    }
    if (level === 'static') return { ...row, status: staticStatus };
  }

  try {
    const result = evaluateDynamicPoint(pointScenario);
    row = { ...row, ...dynamicColumns(result) };
    if (result.status === 'failed') {
      return { ...row, status: 'failed', error: `the pull stopped early (${result.outcome})` };
    }
    return { ...row, status: staticStatus ?? result.status };
  } catch (error) {
    return { ...row, status: 'failed', dynamic_status: 'failed', error: messageOf(error) };
  }
}
