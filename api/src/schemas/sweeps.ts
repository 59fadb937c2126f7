import { sweepLevelSchema, sweepSpecSchema } from '@crackpoint/sim-core';
import { z } from 'zod';
import { uuidSchema } from './common.ts';

export const createSweepBodySchema = z.strictObject({
  scenarioId: uuidSchema,
  // The dynamic level needs the pull model on the workers; until then only the static level runs.
  level: sweepLevelSchema.default('static').refine((level) => level === 'static', 'only the static level can run for now'),
  axes: sweepSpecSchema.shape.axes,
});
export type CreateSweepBody = z.output<typeof createSweepBodySchema>;

export const listSweepsQuerySchema = z.object({
  scenarioId: uuidSchema.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type ListSweepsQuery = z.output<typeof listSweepsQuerySchema>;

export const SURFACE_METRICS = ['crackBoostPa', 'fullOpenBoostPa'] as const;
export type SurfaceMetric = (typeof SURFACE_METRICS)[number];

export const surfaceQuerySchema = z.object({
  metric: z.enum(SURFACE_METRICS, { error: 'must be crackBoostPa or fullOpenBoostPa' }).default('crackBoostPa'),
  x: z.coerce.number().int('must be an axis number').min(0).max(2).default(0),
  y: z.coerce.number().int('must be an axis number').min(0).max(2).default(1),
  /** For a three-axis sweep: which value (by index) of the remaining axis the surface is cut at. */
  slice: z.coerce.number().int('must be a whole number').min(0).default(0),
});
export type SurfaceQuery = z.output<typeof surfaceQuerySchema>;

const axisSchema = z.object({ path: z.string(), values: z.array(z.number()) });

export const sweepViewSchema = z.object({
  id: z.uuid(),
  scenarioId: z.uuid(),
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

export const surfaceSchema = z.object({
  metric: z.enum(SURFACE_METRICS),
  x: axisSchema,
  y: axisSchema,
  /** z[iy][ix], Plotly's layout; null where the point has no value (never opens, failed, not done). */
  z: z.array(z.array(z.number().nullable())),
});
export type Surface = z.infer<typeof surfaceSchema>;

export const sweepResponseSchema = z.object({ sweep: sweepViewSchema });
export const sweepListSchema = z.object({ items: z.array(sweepViewSchema), total: z.number().int() });
