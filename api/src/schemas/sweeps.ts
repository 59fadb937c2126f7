import { scenarioSchema, sweepLevelSchema, sweepSpecSchema } from '@crackpoint/sim-core';
import { z } from 'zod';
import { uuidSchema } from './common.ts';

export const createSweepBodySchema = z.strictObject({
  scenarioId: uuidSchema,
  /** static: the closed-form balance; dynamic: a whole pull per point; both: each point at both levels. */
  level: sweepLevelSchema.default('static'),
  axes: sweepSpecSchema.shape.axes,
});
export type CreateSweepBody = z.output<typeof createSweepBodySchema>;

export const listSweepsQuerySchema = z.object({
  scenarioId: uuidSchema.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type ListSweepsQuery = z.output<typeof listSweepsQuerySchema>;

/** Metrics of the static level and the column each is stored in. */
export const STATIC_METRIC_COLUMNS = {
  crackBoostPa: 'crack_boost_pa',
  fullOpenBoostPa: 'full_open_boost_pa',
} as const;

/** Metrics of a dynamic pull (MODEL.md §5) and their columns; flags read 1 (set) or 0. */
export const DYNAMIC_METRIC_COLUMNS = {
  dynamicCrackBoostPa: 'dynamic_crack_boost_pa',
  peakBoostPa: 'peak_boost_pa',
  settledBoostPa: 'settled_boost_pa',
  staticBoostAtSettledLiftPa: 'static_boost_at_settled_lift_pa',
  overshootPa: 'overshoot_pa',
  timeTo90PercentS: 'time_to_90_percent_s',
  creepPa: 'creep_pa',
  peakDrivePa: 'peak_drive_pa',
  driveRatioSeen: 'drive_ratio_seen',
  maxLiftFraction: 'max_lift_fraction',
  gasUsedPerPullKg: 'gas_used_per_pull_kg',
  pullsPerSupply: 'pulls_per_supply',
  boostSwingPa: 'boost_swing_pa',
  armedGasKgPerS: 'armed_gas_kg_per_s',
  sessionGasKg: 'session_gas_kg',
  overBoostLimit: 'over_boost_limit',
  heldOpenByDrive: 'held_open_by_drive',
  supplyBelowSetpoint: 'supply_below_setpoint',
  pastZeroFlowLine: 'past_zero_flow_line',
  notSettled: 'not_settled',
  hunting: 'hunting',
  portLag: 'port_lag',
  targetUnreachable: 'target_unreachable',
} as const;

/** Metrics stored as booleans. */
export const FLAG_METRICS: ReadonlySet<string> = new Set([
  'overBoostLimit',
  'heldOpenByDrive',
  'supplyBelowSetpoint',
  'pastZeroFlowLine',
  'notSettled',
  'hunting',
  'portLag',
  'targetUnreachable',
]);

export const METRIC_COLUMNS = { ...STATIC_METRIC_COLUMNS, ...DYNAMIC_METRIC_COLUMNS } as const;
export type SurfaceMetric = keyof typeof METRIC_COLUMNS;
export const SURFACE_METRICS = Object.keys(METRIC_COLUMNS) as [SurfaceMetric, ...SurfaceMetric[]];

export const surfaceQuerySchema = z.object({
  metric: z.enum(SURFACE_METRICS, { error: `must be one of ${SURFACE_METRICS.join(', ')}` }).default('crackBoostPa'),
  x: z.coerce.number().int('must be an axis number').min(0).max(2).default(0),
  y: z.coerce.number().int('must be an axis number').min(0).max(2).default(1),
  /** For a three-axis sweep: which value (by index) of the remaining axis the surface is cut at. */
  slice: z.coerce.number().int('must be a whole number').min(0).default(0),
  /** For a three-axis sweep: the value (SI) of the remaining axis to cut at; the nearest listed one is used. */
  at: z.coerce.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number').optional(),
});
export type SurfaceQuery = z.output<typeof surfaceQuerySchema>;

const axisSchema = z.object({ path: z.string(), values: z.array(z.number()) });

export const sweepViewSchema = z.object({
  id: z.uuid(),
  scenarioId: z.uuid(),
  /** The member who started it (null once they have left); builders cancel only their own. */
  createdBy: z.uuid().nullable(),
  state: z.enum(['queued', 'running', 'done', 'failed', 'cancelled']),
  level: sweepLevelSchema,
  axes: z.array(axisSchema),
  pointCount: z.number().int(),
  /** Finished points, failed ones included. */
  pointsDone: z.number().int(),
  pointsFailed: z.number().int(),
  createdAt: z.string(),
  startedAt: z.string().nullable(),
  finishedAt: z.string().nullable(),
});
export type SweepView = z.infer<typeof sweepViewSchema>;

/** One sweep on its own: its view and the copy of the scenario its points were computed from (not in lists, to keep them small). */
export const sweepDetailSchema = sweepViewSchema.extend({
  /**
   * The scenario as it was when the sweep was made, never as edited since, read through the current model
   * (inputs added since get their defaults); null when the model no longer accepts it.
   */
  scenarioSnapshot: scenarioSchema.nullable(),
});
export type SweepDetail = z.infer<typeof sweepDetailSchema>;

export const surfaceSchema = z.object({
  metric: z.enum(SURFACE_METRICS),
  x: axisSchema,
  y: axisSchema,
  /** z[iy][ix], Plotly's layout; null where the point has no value (never opens, failed, not done). */
  z: z.array(z.array(z.number().nullable())),
  /** Where a three-axis sweep was cut: the remaining axis and the listed value used; null for two axes. */
  slice: z
    .object({ axis: z.number().int(), path: z.string(), index: z.number().int(), value: z.number(), requested: z.number().nullable() })
    .nullable(),
});
export type Surface = z.infer<typeof surfaceSchema>;

export const sweepResponseSchema = z.object({ sweep: sweepViewSchema });
export const sweepDetailResponseSchema = z.object({ sweep: sweepDetailSchema });
export const sweepListSchema = z.object({ items: z.array(sweepViewSchema), total: z.number().int() });
