import type { Knex } from 'knex';
import { AppError, type FieldErrors } from '../errors/index.ts';
import { FLAG_METRICS, METRIC_COLUMNS, type Surface, type SurfaceQuery } from '../schemas/sweeps.ts';
import { findWorkspaceSweep, metricFieldsFor, strideOf } from './sweep-results-common.ts';

/** The listed value nearest to `at` (the first of two equally near). */
function nearestIndex(values: readonly number[], at: number): number {
  let best = 0;
  values.forEach((value, i) => {
    if (Math.abs(value - at) < Math.abs((values[best] ?? value) - at)) best = i;
  });
  return best;
}

/**
 * A metric over two axes of a sweep, z[iy][ix]. A three-axis sweep is cut at one value of the third
 * axis, given as `at` (a value, the nearest listed one is used) or `slice` (its index). One indexed
 * query reads the grid: the sweep's points by the sweep's id, and for three axes only the slice's point
 * indices (computed here from the axis strides), so a 100 × 100 grid reads 10,000 rows of the sweep.
 */
export async function getSweepSurface(knex: Knex, workspaceId: string, id: string, query: SurfaceQuery): Promise<Surface> {
  const sweep = await findWorkspaceSweep(knex, workspaceId, id);
  const axes = sweep.axes;
  const fields: FieldErrors = {};
  if (query.x >= axes.length) fields.x = `must name one of the sweep's ${axes.length} axes (0…${axes.length - 1})`;
  if (query.y >= axes.length) fields.y = `must name one of the sweep's ${axes.length} axes (0…${axes.length - 1})`;
  if (query.x === query.y) fields.y = 'must be a different axis from x';
  const other = [0, 1, 2].find((a) => a < axes.length && a !== query.x && a !== query.y);
  const otherAxis = other === undefined ? undefined : axes[other];

  let sliceIndex = query.slice;
  if (query.at !== undefined) {
    if (!otherAxis) {
      fields.at = `applies to a three-axis sweep only; this sweep has ${axes.length} ${axes.length === 1 ? 'axis' : 'axes'}`;
    } else {
      const low = Math.min(...otherAxis.values);
      const high = Math.max(...otherAxis.values);
      if (query.at < low || query.at > high) {
        fields.at = `must be within ${low}…${high}, the values of axis ${other} (${otherAxis.path})`;
      } else {
        sliceIndex = nearestIndex(otherAxis.values, query.at);
      }
    }
  } else if (otherAxis && query.slice >= otherAxis.values.length) {
    fields.slice = `must be below ${otherAxis.values.length}, the number of values of axis ${other}`;
  }
  const xAxis = axes[query.x];
  const yAxis = axes[query.y];
  if (Object.keys(fields).length > 0 || !xAxis || !yAxis) throw AppError.validation(fields, 'The surface query is not valid.');

  const levelFields = metricFieldsFor(sweep.level, query.metric, 'metric');
  if (levelFields) throw AppError.validation(levelFields, 'The surface query is not valid.');

  const column = METRIC_COLUMNS[query.metric];
  const xStride = strideOf(axes, query.x);
  const yStride = strideOf(axes, query.y);
  // Flags are booleans in the table; a surface plots them as 1 (set) and 0.
  const points = knex('sweep_points')
    .where('sweep_id', sweep.id)
    .whereNotNull(column)
    .select<{ point_index: number; value: number }[]>(
      'point_index',
      knex.raw(FLAG_METRICS.has(query.metric) ? '??::int as value' : '?? as value', [column]),
    );
  if (other !== undefined && otherAxis) {
    const base = sliceIndex * strideOf(axes, other);
    const indices: number[] = [];
    for (let iy = 0; iy < yAxis.values.length; iy++) {
      for (let ix = 0; ix < xAxis.values.length; ix++) indices.push(base + ix * xStride + iy * yStride);
    }
    points.whereRaw('point_index = any(?::int[])', [indices]);
  }

  const z: (number | null)[][] = yAxis.values.map(() => xAxis.values.map(() => null));
  for (const point of await points) {
    const ix = Math.floor(point.point_index / xStride) % xAxis.values.length;
    const iy = Math.floor(point.point_index / yStride) % yAxis.values.length;
    const row = z[iy];
    if (row) row[ix] = point.value;
  }
  return {
    metric: query.metric,
    x: { path: xAxis.path, values: xAxis.values },
    y: { path: yAxis.path, values: yAxis.values },
    z,
    slice:
      other !== undefined && otherAxis
        ? { axis: other, path: otherAxis.path, index: sliceIndex, value: otherAxis.values[sliceIndex] ?? Number.NaN, requested: query.at ?? null }
        : null,
  };
}
