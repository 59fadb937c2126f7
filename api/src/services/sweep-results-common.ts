import type { Knex } from 'knex';
import { AppError, type FieldErrors } from '../errors/index.ts';
import { Sweep, type ResolvedAxis } from '../models/index.ts';
import { DYNAMIC_METRIC_COLUMNS, STATIC_METRIC_COLUMNS, type SurfaceMetric } from '../schemas/sweeps.ts';

/** The sweep of the caller's workspace; another workspace's is a 404 exactly like a missing one. */
export async function findWorkspaceSweep(knex: Knex, workspaceId: string, id: string): Promise<Sweep> {
  const sweep = await Sweep.query(knex).modify('inWorkspace', workspaceId).findById(id);
  if (!sweep) throw AppError.notFound('Sweep');
  return sweep;
}

/**
 * Point indices run with the first axis slowest (sim-core's order), so axis a's value index of a
 * point is floor(index / stride_a) mod n_a with stride_a the product of the later axes' lengths.
 */
export function strideOf(axes: readonly ResolvedAxis[], axis: number): number {
  return axes.slice(axis + 1).reduce((n, a) => n * a.values.length, 1);
}

/** The metrics a sweep of this level computes, in the order the table and the CSV show them. */
export function metricsOfLevel(level: Sweep['level']): SurfaceMetric[] {
  const staticMetrics = Object.keys(STATIC_METRIC_COLUMNS) as SurfaceMetric[];
  const dynamicMetrics = Object.keys(DYNAMIC_METRIC_COLUMNS) as SurfaceMetric[];
  if (level === 'static') return staticMetrics;
  if (level === 'dynamic') return dynamicMetrics;
  return [...staticMetrics, ...dynamicMetrics];
}

/** A metric the sweep's level never computes is a mistake to point out, not a column of nulls. */
export function metricFieldsFor(level: Sweep['level'], metric: SurfaceMetric, field: string): FieldErrors | undefined {
  if (level === 'static' && metric in DYNAMIC_METRIC_COLUMNS) {
    return { [field]: `is a result of the dynamic level; this sweep ran the static level only (${Object.keys(STATIC_METRIC_COLUMNS).join(', ')})` };
  }
  if (level === 'dynamic' && metric in STATIC_METRIC_COLUMNS) {
    return { [field]: `is a result of the static level; this sweep ran the dynamic level only (dynamicCrackBoostPa, settledBoostPa, …)` };
  }
  return undefined;
}

/** The point's value of each axis by the axis's path (SI), from the stored axis columns. */
export function coordinatesOfRow(axes: readonly ResolvedAxis[], row: { axis0: number | null; axis1: number | null; axis2: number | null }): Record<string, number> {
  const stored = [row.axis0, row.axis1, row.axis2];
  const coordinates: Record<string, number> = {};
  axes.forEach((axis, a) => {
    const value = stored[a];
    if (value !== null && value !== undefined) coordinates[axis.path] = value;
  });
  return coordinates;
}
