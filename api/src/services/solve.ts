import { solveForTarget } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import type { z } from 'zod';
import { AppError } from '../errors/index.ts';
import type { SolveBody, solveResponseSchema } from '../schemas/solve.ts';
import { storedScenarioData } from './scenario-data.ts';
import { findScenario } from './scenarios.ts';

/**
 * The target solve of a stored scenario (MODEL.md §4b): the value of one unknown that gives a crack or full-open
 * boost, instantly. A settled-boost target runs several pulls in a row; here that would hold a request for seconds,
 * so it is answered on the scenario page (in the browser's worker) and by `npm run sim -- solve`.
 */
export async function solveScenario(knex: Knex, workspaceId: string, id: string, body: SolveBody): Promise<z.input<typeof solveResponseSchema>> {
  if (body.target === 'settled') {
    throw new AppError(422, 'settled_solve_not_here', 'A settled-boost target runs several pulls: solve it on the scenario page or with the command line.', {
      target: 'settled is solved on the scenario page or by `npm run sim -- solve`; here use crack or full-open',
    });
  }
  const scenario = await findScenario(knex, workspaceId, id);
  const data = storedScenarioData(scenario.data);
  let result;
  try {
    result = solveForTarget(data, { unknown: body.unknown, target: body.target, targetBoostPa: body.targetBoostPa, ...(body.ratioBand ? { ratioBand: body.ratioBand } : {}) });
  } catch (error) {
    // sim-core refuses an unknown the arrangement has no place for, naming the scenario field that decides it.
    if (error instanceof RangeError) {
      throw new AppError(422, 'unknown_not_in_scenario', `This scenario cannot be solved for ${body.unknown}: ${error.message}.`, { unknown: error.message });
    }
    throw error;
  }
  // The client has the scenario already; the answer goes back without it.
  const { scenario: _withAnswer, ...solve } = { scenario: undefined, ...result };
  return { solve, scenarioId: scenario.id, scenarioVersion: scenario.version };
}
