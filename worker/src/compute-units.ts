import type { SweepLevel } from './points/point-row.ts';

/**
 * What compute costs, in compute units (the unit of every quota, purchase and ledger line).
 *
 * - A dynamic pull (a whole time-stepped pull: a dynamic sweep point, or a pull run on the server)
 *   costs 1 unit.
 * - Static points cost 1 unit per 1,000, rounded up per sweep: they are closed-form and take
 *   microseconds each, so only large maps are worth counting.
 * - A sweep at level `both` computes both for every point and costs the sum.
 *
 * The worker charges a running sweep by this same rule as its points complete, so a finished sweep's
 * ledger equals its estimate less the points that failed.
 */
export const STATIC_POINTS_PER_UNIT = 1000;
export const UNITS_PER_DYNAMIC_PULL = 1;

export function sweepComputeUnits(level: SweepLevel, points: number): number {
  if (!Number.isInteger(points) || points < 0) throw new RangeError(`points must be a whole number ≥ 0, got ${points}`);
  const staticUnits = level === 'dynamic' ? 0 : Math.ceil(points / STATIC_POINTS_PER_UNIT);
  const dynamicUnits = level === 'static' ? 0 : points * UNITS_PER_DYNAMIC_PULL;
  return staticUnits + dynamicUnits;
}

/**
 * How a sweep's units split while it runs, given its reservation (the estimate taken at creation) and
 * its finished points. Spent is what its computed points cost; failed points cost nothing. What is
 * still reserved is the estimate less what every finished point (failed ones too) would cost, so the
 * units of failed points go back to the pool at once and spent + reserved never exceeds the estimate.
 */
export function sweepUnitsSplit(
  level: SweepLevel,
  estimateUnits: number,
  pointsDone: number,
  pointsFailed: number,
): { spent: number; reserved: number } {
  const spent = sweepComputeUnits(level, pointsDone - pointsFailed);
  const reserved = Math.max(0, estimateUnits - sweepComputeUnits(level, pointsDone));
  return { spent, reserved };
}
