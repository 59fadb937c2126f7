import type { PullResult } from '@crackpoint/sim-core';
import { z } from 'zod';
import { POINT_STATUSES, type PointStatus } from '../models/sweep-point.ts';
import { uuidSchema } from './common.ts';
import { pullResultSchema } from './pulls.ts';
import { FLAG_METRICS, METRIC_COLUMNS, SURFACE_METRICS, type SurfaceMetric } from './sweeps.ts';

const sweepStateSchema = z.enum(['queued', 'running', 'done', 'failed', 'cancelled']);

/** The data of a `progress` event of `GET /api/sweeps/:id/events`. */
export const sweepProgressEventSchema = z.object({
  state: sweepStateSchema,
  pointCount: z.number().int(),
  /** Finished points, failed ones included. */
  pointsDone: z.number().int(),
  pointsFailed: z.number().int(),
  /** Over the last few seconds, not since the start; null until two readings span some time. */
  pointsPerSecond: z.number().nullable(),
  /** Null until the rate is known (and on a failed or cancelled sweep); 0 once done. */
  secondsLeft: z.number().nullable(),
});
export type SweepProgressEvent = z.infer<typeof sweepProgressEventSchema>;

/** The data of a `state` event: the state the sweep moved to, and the one it left (null on the first). */
export const sweepStateEventSchema = z.object({ state: sweepStateSchema, previous: sweepStateSchema.nullable() });
export type SweepStateEvent = z.infer<typeof sweepStateEventSchema>;

/** Sort keys of the points table: the index, an axis by its number, or a stored metric. */
export const POINT_SORTS = ['index', 'axis0', 'axis1', 'axis2', ...SURFACE_METRICS] as const;
export type PointSort = (typeof POINT_SORTS)[number];

const pointStatusSchema = z.enum(POINT_STATUSES, { error: `must be one of ${POINT_STATUSES.join(', ')}` });
const KNOWN_STATUSES: ReadonlySet<string> = new Set(POINT_STATUSES);

/** One status, or several separated by commas; a wrong one is named under `status` itself. */
const pointStatusesSchema = z.string({ error: 'must be text' }).transform((text, ctx) => {
  const parts = text.split(',').map((part) => part.trim()).filter((part) => part !== '');
  const unknown = parts.filter((part) => !KNOWN_STATUSES.has(part));
  if (parts.length === 0 || unknown.length > 0) {
    ctx.issues.push({
      code: 'custom',
      input: text,
      message: `must be one or more of ${POINT_STATUSES.join(', ')}, separated by commas${unknown.length > 0 ? ` (not ${unknown.join(', ')})` : ''}`,
    });
    return z.NEVER;
  }
  return parts as PointStatus[];
});

/** Metrics a range filter can take: the stored numbers, not the yes/no flags. */
export const RANGE_METRICS = SURFACE_METRICS.filter((m) => !FLAG_METRICS.has(m)) as [SurfaceMetric, ...SurfaceMetric[]];
const bound = z.coerce.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a number');

/**
 * "Points whose `between` metric lies from `from` to `to`" (SI, inclusive): a sweep that answers a target, e.g. settled
 * boost between 19.5 and 20.5 psi. The three come together.
 */
const rangeShape = {
  between: z.enum(RANGE_METRICS, { error: `must be one of ${RANGE_METRICS.join(', ')}` }).optional(),
  from: bound.optional(),
  to: bound.optional(),
};
function checkRange(q: { between?: unknown; from?: number | undefined; to?: number | undefined }, ctx: z.RefinementCtx): void {
  const given = [q.between, q.from, q.to].filter((v) => v !== undefined).length;
  if (given === 0) return;
  if (q.between === undefined) ctx.addIssue({ code: 'custom', path: ['between'], message: 'is required with from and to: the metric they bound' });
  if (q.from === undefined) ctx.addIssue({ code: 'custom', path: ['from'], message: 'is required with between: the lowest value kept' });
  if (q.to === undefined) ctx.addIssue({ code: 'custom', path: ['to'], message: 'is required with between: the highest value kept' });
  if (q.from !== undefined && q.to !== undefined && q.to < q.from) ctx.addIssue({ code: 'custom', path: ['to'], message: 'must be at least from' });
}

export const listPointsQuerySchema = z.object({
  offset: z.coerce.number({ error: 'must be a whole number' }).int('must be a whole number').min(0).default(0),
  limit: z.coerce.number({ error: 'must be a whole number' }).int('must be a whole number').min(1).max(500).default(100),
  sort: z.enum(POINT_SORTS, { error: `must be one of ${POINT_SORTS.join(', ')}` }).default('index'),
  order: z.enum(['asc', 'desc'], { error: 'must be asc or desc' }).default('asc'),
  status: pointStatusesSchema.optional(),
  ...rangeShape,
}).superRefine(checkRange);
export type ListPointsQuery = z.output<typeof listPointsQuerySchema>;

const metricValueSchema = z.union([z.number(), z.boolean(), z.null()]);

export const sweepPointSchema = z.object({
  index: z.number().int(),
  /** The point's value of each axis, by the axis's path in the scenario (SI). */
  coordinates: z.record(z.string(), z.number()),
  status: pointStatusSchema,
  /** The dynamic level's own verdict; null on a static-only sweep. */
  dynamicStatus: pointStatusSchema.nullable(),
  error: z.string().nullable(),
  /** The metrics of the sweep's level, SI (Pa gauge, s, kg); flags true or false; null where not computed. */
  metrics: z.record(z.string(), metricValueSchema),
});
export type SweepPointView = z.infer<typeof sweepPointSchema>;

export const sweepPointListSchema = z.object({
  items: z.array(sweepPointSchema),
  /** Points matching the status filter (all stored points without one). */
  total: z.number().int(),
  offset: z.number().int(),
  limit: z.number().int(),
  sort: z.enum(POINT_SORTS),
  order: z.enum(['asc', 'desc']),
});
export type SweepPointList = z.infer<typeof sweepPointListSchema>;

export const EXPORT_UNIT_SYSTEMS = ['si', 'us', 'metric'] as const;
export type ExportUnitSystem = (typeof EXPORT_UNIT_SYSTEMS)[number];

export const exportPointsQuerySchema = z.object({
  units: z.enum(EXPORT_UNIT_SYSTEMS, { error: 'must be si, us or metric' }).default('si'),
  status: pointStatusesSchema.optional(),
  ...rangeShape,
}).superRefine(checkRange);
export type ExportPointsQuery = z.output<typeof exportPointsQuerySchema>;

/** The index is read by the service, so a bad one is an answer naming `index`, not a bare 404. */
export const pointParamsSchema = z.strictObject({ id: uuidSchema, index: z.string() });

export const sweepPointPullResponseSchema = z.object({
  pull: pullResultSchema,
  scenarioId: z.uuid(),
  /** The scenario's version when it still holds what the sweep ran; null when it has been edited since. */
  scenarioVersion: z.number().int().nullable(),
  maxSteps: z.number().int(),
  sweepId: z.uuid(),
  pointIndex: z.number().int(),
  coordinates: z.record(z.string(), z.number()),
});
export interface SweepPointPullResponse {
  pull: PullResult;
  scenarioId: string;
  scenarioVersion: number | null;
  maxSteps: number;
  sweepId: string;
  pointIndex: number;
  coordinates: Record<string, number>;
}

/** The typed column a sort key reads. */
export function sortColumnOf(sort: PointSort): string {
  if (sort === 'index') return 'point_index';
  if (sort === 'axis0' || sort === 'axis1' || sort === 'axis2') return sort;
  return METRIC_COLUMNS[sort as SurfaceMetric];
}
