import { defaultScenario } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import { raw } from 'objection';
import { AppError } from '../errors/index.ts';
import { Scenario } from '../models/index.ts';
import type { CreateScenarioBody, ScenarioRow, UpdateScenarioBody } from '../schemas/scenarios.ts';
import type { AuthContext } from './auth.ts';
import { validateScenarioData } from './scenario-data.ts';

export function presentScenario(scenario: Scenario): ScenarioRow {
  return {
    id: scenario.id,
    name: scenario.name,
    data: scenario.data,
    version: scenario.version,
    ownerId: scenario.ownerId,
    createdAt: scenario.createdAt.toISOString(),
    updatedAt: scenario.updatedAt.toISOString(),
  };
}

/** Builders change only what they made; admins and engineers change anything in the workspace. */
function assertMayEdit(auth: AuthContext, scenario: Scenario): void {
  if (auth.role === 'admin' || auth.role === 'engineer') return;
  if (auth.role === 'builder' && scenario.ownerId === auth.userId) return;
  throw AppError.forbidden('Your role may not change this scenario.');
}

export async function listScenarios(
  knex: Knex,
  workspaceId: string,
  page: { limit: number; offset: number },
): Promise<{ items: ScenarioRow[]; total: number }> {
  const query = Scenario.query(knex).modify('inWorkspace', workspaceId);
  const [rows, total] = await Promise.all([
    query.clone().orderBy('updated_at', 'desc').orderBy('id').limit(page.limit).offset(page.offset),
    query.clone().resultSize(),
  ]);
  return { items: rows.map(presentScenario), total };
}

/** Another workspace's scenario is "not found", exactly like a missing one. */
export async function findScenario(knex: Knex, workspaceId: string, id: string): Promise<Scenario> {
  const scenario = await Scenario.query(knex).modify('inWorkspace', workspaceId).findById(id);
  if (!scenario) throw AppError.notFound('Scenario');
  return scenario;
}

export async function getScenario(knex: Knex, workspaceId: string, id: string): Promise<ScenarioRow> {
  return presentScenario(await findScenario(knex, workspaceId, id));
}

export async function createScenario(knex: Knex, auth: AuthContext, input: CreateScenarioBody): Promise<ScenarioRow> {
  // Partial data is not merged with defaults: a scenario is either the default or complete.
  const data = input.data === undefined ? defaultScenario() : validateScenarioData(input.data, 'data');
  const scenario = await Scenario.query(knex).insertAndFetch({
    workspaceId: auth.workspaceId,
    ownerId: auth.userId,
    name: input.name,
    data,
  });
  return presentScenario(scenario);
}

export async function updateScenario(
  knex: Knex,
  auth: AuthContext,
  id: string, input: UpdateScenarioBody): Promise<ScenarioRow> {
  const current = await findScenario(knex, auth.workspaceId, id);
  assertMayEdit(auth, current);
  const data = input.data === undefined ? undefined : validateScenarioData(input.data, 'data');

  // The version check and the increment are one statement, so two editors holding the same version
  // cannot both win.
  const [updated] = await Scenario.query(knex)
    .modify('inWorkspace', auth.workspaceId)
    .where('scenarios.id', id)
    .where('scenarios.version', input.version)
    .patch({
      ...(input.name === undefined ? {} : { name: input.name }),
      ...(data === undefined ? {} : { data }),
      version: raw('version + 1'),
    })
    .returning('*');
  if (!updated) {
    throw AppError.conflict(
      'version_conflict',
      'This scenario was changed by someone else since you opened it. Reload it and apply your change again.',
    );
  }
  return presentScenario(updated);
}
