import type { PullResult } from '@crackpoint/sim-core';
import { AppError } from '../errors/index.ts';
import type { ApiDeps } from '../routes/route-def.ts';
import type { PullResponse } from '../schemas/pulls.ts';
import type { AuthContext } from './auth.ts';
import { withServerPullCharge } from './compute-units.ts';
import { PullFailedError, PullTimeoutError } from './pull/pull-runner.ts';
import { storedScenarioData } from './scenario-data.ts';
import { assertOwnRecord } from './ownership.ts';
import { findScenario } from './scenarios.ts';

/**
 * One dynamic pull of a stored scenario, computed while the request waits. "Small" is enforced before it
 * starts (samples of the series, integrator steps) and the whole answer is bounded in time. It costs one
 * compute unit, charged to the caller before it runs (402 when none is left) and taken back if it fails.
 */
export async function runScenarioPull(
  deps: Pick<ApiDeps, 'knex' | 'config' | 'pulls'>,
  auth: Pick<AuthContext, 'workspaceId' | 'userId' | 'role'>,
  id: string,
): Promise<PullResponse> {
  const scenario = await findScenario(deps.knex, auth.workspaceId, id);
  assertOwnRecord(auth, scenario.ownerId, 'A builder runs pulls only on their own scenarios.');
  const data = storedScenarioData(scenario.data);
  const { config } = deps;

  const samples = Math.floor(data.engine.pullDurationS / data.solver.sampleIntervalS) + 1;
  if (samples > config.pullMaxSamples) {
    const message = `give ${samples} samples with engine.pullDurationS; a pull computed here has at most ${config.pullMaxSamples}`;
    throw new AppError(422, 'pull_too_large', 'This pull is too long to compute here. Shorten it or sample it less often.', {
      'data.solver.sampleIntervalS': message,
    });
  }
  const maxSteps = Math.min(data.solver.maxSteps, config.pullMaxSteps);
  const bounded = maxSteps === data.solver.maxSteps ? data : { ...data, solver: { ...data.solver, maxSteps } };

  let pull: PullResult;
  try {
    pull = await withServerPullCharge(deps, auth, { scenarioId: scenario.id }, () => deps.pulls.run(bounded));
  } catch (error) {
    if (error instanceof PullTimeoutError) {
      throw new AppError(
        503,
        'pull_timed_out',
        `The pull took longer than ${error.limitMs < 1000 ? `${error.limitMs} ms` : `${(error.limitMs / 1000).toFixed(1)} s`} to compute here. Shorten it, loosen the solver tolerance or try again when fewer pulls are running.`,
      );
    }
    // sim-core's own message names the option it refused; it carries no data of the server.
    if (error instanceof PullFailedError) throw new AppError(422, 'pull_failed', `The pull could not be computed: ${error.message}`);
    throw error;
  }
  return { pull, scenarioId: scenario.id, scenarioVersion: scenario.version, maxSteps };
}
