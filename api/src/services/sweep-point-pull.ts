import { countPoints, pointAt, type PullResult, type Scenario } from '@crackpoint/sim-core';
import { AppError } from '../errors/index.ts';
import type { ApiDeps } from '../routes/route-def.ts';
import type { SweepPointPullResponse } from '../schemas/sweep-results.ts';
import type { AuthContext } from './auth.ts';
import { withServerPullCharge } from './compute-units.ts';
import { PullFailedError, PullTimeoutError } from './pull/pull-runner.ts';
import { assertOwnRecord } from './ownership.ts';
import { storedScenarioData } from './scenario-data.ts';
import { findWorkspaceSweep } from './sweep-results-common.ts';

/** A point index as the path gives it: digits only, so "1e3", "-0" or "07.5" never pass as a number. */
function parseIndex(text: string, pointCount: number): number {
  if (!/^\d{1,9}$/.test(text)) {
    throw AppError.validation({ index: `must be a whole number from 0 to ${pointCount - 1}` }, 'The point index is not valid.');
  }
  const index = Number(text);
  if (index >= pointCount) {
    throw new AppError(404, 'point_not_found', `The sweep has no point ${index}; it has ${pointCount} points.`, {
      index: `must be below ${pointCount}, the sweep's point count`,
    });
  }
  return index;
}

/** The same bounds as a pull of a stored scenario: samples refused, steps capped, the answer says which. */
function bounded(config: ApiDeps['config'], data: Scenario): { scenario: Scenario; maxSteps: number } {
  const samples = Math.floor(data.engine.pullDurationS / data.solver.sampleIntervalS) + 1;
  if (samples > config.pullMaxSamples) {
    throw new AppError(422, 'pull_too_large', 'This pull is too long to compute here. Shorten it or sample it less often.', {
      'data.solver.sampleIntervalS': `give ${samples} samples with engine.pullDurationS; a pull computed here has at most ${config.pullMaxSamples}`,
    });
  }
  const maxSteps = Math.min(data.solver.maxSteps, config.pullMaxSteps);
  return { scenario: maxSteps === data.solver.maxSteps ? data : { ...data, solver: { ...data.solver, maxSteps } }, maxSteps };
}

function pullError(error: unknown): unknown {
  if (error instanceof PullTimeoutError) {
    const limit = error.limitMs < 1000 ? `${error.limitMs} ms` : `${(error.limitMs / 1000).toFixed(1)} s`;
    return new AppError(503, 'pull_timed_out', `The pull took longer than ${limit} to compute here. Try again when fewer pulls are running.`);
  }
  // sim-core's own message names the option it refused; it carries no data of the server.
  if (error instanceof PullFailedError) return new AppError(422, 'pull_failed', `The pull could not be computed: ${error.message}`);
  return error;
}

/**
 * The full pull of one sweep point, recomputed from the sweep's own snapshot of its scenario (never the
 * scenario as edited since) with sim-core's pointAt, in the API's pull threads. It costs one compute
 * unit like any pull computed here, taken back when the pull gives no result.
 */
export async function pullSweepPoint(
  deps: Pick<ApiDeps, 'knex' | 'config' | 'pulls'>,
  auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>,
  id: string,
  indexText: string,
): Promise<SweepPointPullResponse> {
  const sweep = await findWorkspaceSweep(deps.knex, auth.workspaceId, id);
  assertOwnRecord(auth, sweep.createdBy, 'A builder runs the points of only the sweeps they started.');
  const index = parseIndex(indexText, countPoints(sweep.axes));
  const point = pointAt(storedScenarioData(sweep.scenarioSnapshot), sweep.axes, index);
  const { scenario, maxSteps } = bounded(deps.config, point.scenario);

  let pull: PullResult;
  try {
    pull = await withServerPullCharge(deps, auth, { scenarioId: sweep.scenarioId, sweepId: sweep.id, note: `point ${index}` }, () => deps.pulls.run(scenario));
  } catch (error) {
    throw pullError(error);
  }

  const source = await deps.knex('scenarios')
    .where({ id: sweep.scenarioId })
    .first<{ version: number; same: boolean } | undefined>('version', deps.knex.raw('data = (select scenario_snapshot from sweeps where id = ?) as same', [sweep.id]));
  const coordinates: Record<string, number> = {};
  sweep.axes.forEach((axis, a) => {
    const value = point.values[a];
    if (value !== undefined) coordinates[axis.path] = value;
  });
  return {
    pull,
    scenarioId: sweep.scenarioId,
    scenarioVersion: source?.same ? source.version : null,
    maxSteps,
    sweepId: sweep.id,
    pointIndex: index,
    coordinates,
  };
}
