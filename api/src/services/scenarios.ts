import { defaultScenario } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import { raw } from 'objection';
import { AppError } from '../errors/index.ts';
import { Scenario } from '../models/index.ts';
import type { CreateScenarioBody, ListScenariosQuery, ScenarioRow, ScenarioSources, UpdateScenarioBody } from '../schemas/scenarios.ts';
import { diffChanges, recordAudit, snapshotChanges } from './audit.ts';
import type { AuthContext } from './auth.ts';
import { likePattern } from './library.ts';
import { validateScenarioData } from './scenario-data.ts';
import { applySources, NO_SOURCES, sourcesOf, springSourcesOf, writeSpringSources } from './scenario-sources.ts';

export function presentScenario(scenario: Scenario, springIds: string[]): ScenarioRow {
  return {
    id: scenario.id,
    name: scenario.name,
    data: scenario.data,
    version: scenario.version,
    ownerId: scenario.ownerId,
    sources: sourcesOf(scenario, springIds),
    createdAt: scenario.createdAt.toISOString(),
    updatedAt: scenario.updatedAt.toISOString(),
  };
}

async function presentOne(knex: Knex, scenario: Scenario): Promise<ScenarioRow> {
  return presentScenario(scenario, (await springSourcesOf(knex, [scenario.id])).get(scenario.id) ?? []);
}

/** Builders change only what they made; admins and engineers change anything in the workspace. */
function assertMayEdit(auth: AuthContext, scenario: Scenario): void {
  if (auth.role === 'admin' || auth.role === 'engineer') return;
  if (auth.role === 'builder' && scenario.ownerId === auth.userId) return;
  throw AppError.forbidden('Your role may not change this scenario.');
}

const SORT_COLUMNS = { name: 'lower(scenarios.name)', createdAt: 'scenarios.created_at', updatedAt: 'scenarios.updated_at' } as const;

export async function listScenarios(
  knex: Knex,
  workspaceId: string,
  query: ListScenariosQuery,
): Promise<{ items: ScenarioRow[]; total: number }> {
  const base = Scenario.query(knex).modify('inWorkspace', workspaceId);
  if (query.q) base.whereRaw("scenarios.name ilike ? escape '\\'", [likePattern(query.q)]);
  if (query.ownerId) base.where('scenarios.owner_id', query.ownerId);
  const page = base
    .clone()
    .orderByRaw(`${SORT_COLUMNS[query.sort]} ${query.order === 'asc' ? 'asc' : 'desc'}`)
    .orderBy('scenarios.id')
    .limit(query.limit)
    .offset(query.offset);
  const [rows, total] = await Promise.all([page, base.clone().resultSize()]);
  const springs = await springSourcesOf(knex, rows.map((row) => row.id));
  return { items: rows.map((row) => presentScenario(row, springs.get(row.id) ?? [])), total };
}

/** Another workspace's scenario is "not found", exactly like a missing one. */
export async function findScenario(knex: Knex, workspaceId: string, id: string): Promise<Scenario> {
  const scenario = await Scenario.query(knex).modify('inWorkspace', workspaceId).findById(id);
  if (!scenario) throw AppError.notFound('Scenario');
  return scenario;
}

export async function getScenario(knex: Knex, workspaceId: string, id: string): Promise<ScenarioRow> {
  return presentOne(knex, await findScenario(knex, workspaceId, id));
}

function sourceColumns(sources: ScenarioSources) {
  return { engineId: sources.engineId, turboId: sources.turboId, wastegateId: sources.wastegateId, supplyId: sources.supplyId };
}

function auditView(name: string, data: unknown, sources: ScenarioSources) {
  return { name, data, sources };
}

export async function createScenario(knex: Knex, auth: AuthContext, input: CreateScenarioBody): Promise<ScenarioRow> {
  return knex.transaction(async (trx) => {
    // Partial data is not merged with defaults: a scenario is either the default or complete. Parts
    // from the library then replace their sections.
    const base = input.data === undefined ? defaultScenario() : validateScenarioData(input.data, 'data');
    const applied = await applySources(trx, auth.workspaceId, base, NO_SOURCES, input.sources);
    const data = validateScenarioData(applied.data, 'data');
    const scenario = await Scenario.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      ownerId: auth.userId,
      name: input.name,
      data,
      ...sourceColumns(applied.sources),
    });
    await writeSpringSources(trx, scenario, applied.sources.springIds);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'create',
      entityType: 'scenario',
      entityId: scenario.id,
      changes: snapshotChanges(auditView(scenario.name, data, applied.sources), 'to'),
    });
    return presentScenario(scenario, applied.sources.springIds);
  });
}

export async function updateScenario(knex: Knex, auth: AuthContext, id: string, input: UpdateScenarioBody): Promise<ScenarioRow> {
  return knex.transaction(async (trx) => {
    const current = await findScenario(trx, auth.workspaceId, id);
    assertMayEdit(auth, current);
    const currentSources = sourcesOf(current, (await springSourcesOf(trx, [id])).get(id) ?? []);
    const base = input.data === undefined ? current.data : validateScenarioData(input.data, 'data');
    const applied = await applySources(trx, auth.workspaceId, base, currentSources, input.sources);
    const changesData = input.data !== undefined || input.sources !== undefined;
    const data = changesData ? validateScenarioData(applied.data, 'data') : undefined;

    // The version check and the increment are one statement, so two editors holding the same version
    // cannot both win.
    const [updated] = await Scenario.query(trx)
      .modify('inWorkspace', auth.workspaceId)
      .where('scenarios.id', id)
      .where('scenarios.version', input.version)
      .patch({
        ...(input.name === undefined ? {} : { name: input.name }),
        ...(data === undefined ? {} : { data }),
        ...(input.sources === undefined ? {} : sourceColumns(applied.sources)),
        version: raw('version + 1'),
      })
      .returning('*');
    if (!updated) {
      throw AppError.conflict(
        'version_conflict',
        'This scenario was changed by someone else since you opened it. Reload it and apply your change again.',
      );
    }
    if (input.sources !== undefined) await writeSpringSources(trx, updated, applied.sources.springIds);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'update',
      entityType: 'scenario',
      entityId: id,
      changes: diffChanges(
        auditView(current.name, current.data, currentSources),
        auditView(updated.name, updated.data, applied.sources),
      ),
    });
    return presentScenario(updated, applied.sources.springIds);
  });
}

/** The scenario goes with its sweeps and their points (the foreign keys cascade). */
export async function deleteScenario(knex: Knex, auth: AuthContext, id: string): Promise<void> {
  await knex.transaction(async (trx) => {
    const current = await findScenario(trx, auth.workspaceId, id);
    assertMayEdit(auth, current);
    const sources = sourcesOf(current, (await springSourcesOf(trx, [id])).get(id) ?? []);
    await Scenario.query(trx).deleteById(id);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'delete',
      entityType: 'scenario',
      entityId: id,
      changes: snapshotChanges(auditView(current.name, current.data, sources), 'from'),
    });
  });
}

const NAME_MAX = 200;

/** A copy of a scenario for the caller to own, with the same library sources, starting at version 1. */
export async function cloneScenario(knex: Knex, auth: AuthContext, id: string, input: { name?: string }): Promise<ScenarioRow> {
  return knex.transaction(async (trx) => {
    const original = await findScenario(trx, auth.workspaceId, id);
    const sources = sourcesOf(original, (await springSourcesOf(trx, [id])).get(id) ?? []);
    const suffix = ' (copy)';
    const name = input.name ?? `${original.name.slice(0, NAME_MAX - suffix.length)}${suffix}`;
    const copy = await Scenario.query(trx).insertAndFetch({
      workspaceId: auth.workspaceId,
      ownerId: auth.userId,
      name,
      data: original.data,
      ...sourceColumns(sources),
    });
    await writeSpringSources(trx, copy, sources.springIds);
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'clone',
      entityType: 'scenario',
      entityId: copy.id,
      changes: { clonedFrom: { to: original.id }, name: { to: name } },
    });
    return presentScenario(copy, sources.springIds);
  });
}
