import type { Knex } from 'knex';
import { AppError } from '../errors/index.ts';
import type { ResolvedAxis, Sweep } from '../models/index.ts';
import type { PointStatus } from '../models/sweep-point.ts';
import { sortColumnOf, type ListPointsQuery, type SweepPointList, type SweepPointView } from '../schemas/sweep-results.ts';
import { METRIC_COLUMNS, type SurfaceMetric } from '../schemas/sweeps.ts';
import { coordinatesOfRow, findWorkspaceSweep, metricFieldsFor, metricsOfLevel } from './sweep-results-common.ts';

/** A sweep_points row as read for the table and the CSV: the typed columns only, never the jsonb. */
export type StoredPointRow = {
  point_index: number;
  axis0: number | null;
  axis1: number | null;
  axis2: number | null;
  status: PointStatus;
  dynamic_status: PointStatus | null;
  error: string | null;
} & Record<string, number | boolean | string | null>;

/** The columns to read for a sweep of this level. */
export function pointColumns(level: Sweep['level']): string[] {
  return ['point_index', 'axis0', 'axis1', 'axis2', 'status', 'dynamic_status', 'error', ...metricsOfLevel(level).map((m) => METRIC_COLUMNS[m])];
}

export function presentPoint(axes: readonly ResolvedAxis[], metrics: readonly SurfaceMetric[], row: StoredPointRow): SweepPointView {
  const values: Record<string, number | boolean | null> = {};
  for (const metric of metrics) {
    const value = row[METRIC_COLUMNS[metric]];
    values[metric] = value === undefined || typeof value === 'string' ? null : value;
  }
  return {
    index: row.point_index,
    coordinates: coordinatesOfRow(axes, row),
    status: row.status,
    dynamicStatus: row.dynamic_status,
    error: row.error,
    metrics: values,
  };
}

/** Refuses a sort the sweep cannot have: an axis it does not have, a metric its level never computes. */
function checkSort(sweep: Sweep, sort: ListPointsQuery['sort']): void {
  if (sort === 'axis0' || sort === 'axis1' || sort === 'axis2') {
    const axis = Number(sort.slice(4));
    if (axis >= sweep.axes.length) {
      throw AppError.validation(
        { sort: `names axis ${axis}; this sweep has ${sweep.axes.length} (axis0…axis${sweep.axes.length - 1})` },
        'The points query is not valid.',
      );
    }
    return;
  }
  if (sort === 'index') return;
  const fields = metricFieldsFor(sweep.level, sort, 'sort');
  if (fields) throw AppError.validation(fields, 'The points query is not valid.');
}

/** What a points query keeps: the statuses asked for, and a metric's range (points without that value are left out). */
export interface PointFilter {
  status?: readonly PointStatus[] | undefined;
  between?: SurfaceMetric | undefined;
  from?: number | undefined;
  to?: number | undefined;
}

/** Refuses a range on a metric the sweep's level does not store, naming `between`. */
export function checkFilter(sweep: Sweep, filter: PointFilter): void {
  if (filter.between === undefined) return;
  const fields = metricFieldsFor(sweep.level, filter.between, 'between');
  if (fields) throw AppError.validation(fields, 'The points query is not valid.');
}

/** Restricts a points query to the statuses asked for and the metric range. */
export function withFilter<Q extends Knex.QueryBuilder>(query: Q, filter: PointFilter): Q {
  const statuses = filter.status;
  if (statuses && statuses.length > 0) query.whereIn('status', [...statuses]);
  if (filter.between !== undefined && filter.from !== undefined && filter.to !== undefined) {
    query.whereBetween(METRIC_COLUMNS[filter.between], [filter.from, filter.to]);
  }
  return query;
}

/**
 * One page of a sweep's points in the order asked for. The order is found on the narrow (index, sort
 * key) pair first and only that page's rows are read in full, so a sort over a 100,000-point sweep
 * sorts two numbers a row rather than whole rows, with no extra index on the table for the workers to
 * keep up as they write (see the README). Missing values sort last both ways; ties go by index.
 */
export async function listSweepPoints(knex: Knex, workspaceId: string, id: string, query: ListPointsQuery): Promise<SweepPointList> {
  const sweep = await findWorkspaceSweep(knex, workspaceId, id);
  checkSort(sweep, query.sort);
  checkFilter(sweep, query);
  const column = sortColumnOf(query.sort);
  const direction = query.order === 'desc' ? 'desc' : 'asc';

  const ordered = withFilter(knex('sweep_points').where('sweep_id', sweep.id), query).select<{ point_index: number }[]>('point_index');
  if (column === 'point_index') ordered.orderBy('point_index', direction);
  else ordered.orderByRaw(`?? ${direction} nulls last, point_index asc`, [column]);
  ordered.limit(query.limit).offset(query.offset);

  const [page, counted] = await Promise.all([
    ordered,
    withFilter(knex('sweep_points').where('sweep_id', sweep.id), query).first<{ n: string } | undefined>(knex.raw('count(*) as n')),
  ]);
  const indices = page.map((row) => row.point_index);
  const rows =
    indices.length === 0
      ? []
      : await knex('sweep_points')
          .where('sweep_id', sweep.id)
          .whereRaw('point_index = any(?::int[])', [indices])
          .select<StoredPointRow[]>(pointColumns(sweep.level));
  const byIndex = new Map(rows.map((row) => [row.point_index, row]));
  const metrics = metricsOfLevel(sweep.level);
  const items: SweepPointView[] = [];
  for (const index of indices) {
    const row = byIndex.get(index);
    if (row) items.push(presentPoint(sweep.axes, metrics, row));
  }
  return { items, total: Number(counted?.n ?? 0), offset: query.offset, limit: query.limit, sort: query.sort, order: query.order };
}
