import type { Scenario as ScenarioData } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import { AppError, type FieldErrors } from '../errors/index.ts';
import { ScenarioSpring, type Scenario } from '../models/index.ts';
import { LIBRARY_KINDS, type LibraryKind } from '../schemas/library.ts';
import type { ScenarioSources, ScenarioSourcesInput } from '../schemas/scenarios.ts';

type SingleKey = 'engineId' | 'turboId' | 'wastegateId' | 'supplyId';

const SINGLE_SOURCES: readonly { key: SingleKey; kind: LibraryKind; section: 'engine' | 'turbo' | 'wastegate' | 'supply' }[] = [
  { key: 'engineId', kind: LIBRARY_KINDS.engines, section: 'engine' },
  { key: 'turboId', kind: LIBRARY_KINDS.turbos, section: 'turbo' },
  { key: 'wastegateId', kind: LIBRARY_KINDS.wastegates, section: 'wastegate' },
  { key: 'supplyId', kind: LIBRARY_KINDS.supplies, section: 'supply' },
];

export const NO_SOURCES: ScenarioSources = { engineId: null, turboId: null, wastegateId: null, springIds: [], supplyId: null };

export function sourcesOf(scenario: Scenario, springIds: string[]): ScenarioSources {
  return {
    engineId: scenario.engineId,
    turboId: scenario.turboId,
    wastegateId: scenario.wastegateId,
    springIds,
    supplyId: scenario.supplyId,
  };
}

/** Spring sources of many scenarios at once, in their nested order. */
export async function springSourcesOf(knex: Knex, scenarioIds: string[]): Promise<Map<string, string[]>> {
  const bySource = new Map<string, string[]>(scenarioIds.map((id) => [id, []]));
  if (scenarioIds.length === 0) return bySource;
  const rows = await ScenarioSpring.query(knex).whereIn('scenario_id', scenarioIds).orderBy(['scenario_id', 'position']);
  for (const row of rows) bySource.get(row.scenarioId)?.push(row.springId);
  return bySource;
}

export interface AppliedSources {
  /** The scenario's data with every named part's section put in (not yet validated as a whole). */
  data: Record<string, unknown>;
  sources: ScenarioSources;
}

/**
 * Reads the named parts of the caller's workspace and puts them into `base`. A part that is missing,
 * of another workspace (told apart from a missing one by nothing) or archived is a 422 naming its field.
 */
export async function applySources(
  knex: Knex,
  workspaceId: string,
  base: ScenarioData | Record<string, unknown>,
  current: ScenarioSources,
  input: ScenarioSourcesInput | undefined,
): Promise<AppliedSources> {
  const data: Record<string, unknown> = { ...base };
  const sources: ScenarioSources = { ...current, springIds: [...current.springIds] };
  if (!input) return { data, sources };

  const fields: FieldErrors = {};
  const fetch = async (kind: LibraryKind, id: string, field: string) => {
    const item = await kind.model.query(knex).modify('inWorkspace', workspaceId).findById(id);
    if (!item) fields[field] = `is not a ${kind.singular} of this workspace's library`;
    else if (item.archivedAt) fields[field] = `is an archived ${kind.singular}; bring it back or pick another`;
    return item;
  };

  for (const { key, kind, section } of SINGLE_SOURCES) {
    const id = input[key];
    if (id === undefined) continue;
    sources[key] = id;
    if (id === null) continue;
    const item = await fetch(kind, id, `sources.${key}`);
    if (item) data[section] = item.data;
  }
  if (input.springIds !== undefined) {
    sources.springIds = input.springIds;
    if (input.springIds.length > 0) {
      const springs = [];
      for (const [index, id] of input.springIds.entries()) springs.push(await fetch(LIBRARY_KINDS.springs, id, `sources.springIds.${index}`));
      data.springs = springs.map((spring) => spring?.data);
    }
  }
  if (Object.keys(fields).length > 0) {
    throw new AppError(422, 'unknown_part', 'Some parts named are not in the library.', fields);
  }
  return { data, sources };
}

/** Writes the spring sources of a scenario; the single ones are columns written with the scenario. */
export async function writeSpringSources(trx: Knex.Transaction, scenario: Pick<Scenario, 'id' | 'workspaceId'>, springIds: string[]): Promise<void> {
  await ScenarioSpring.query(trx).where('scenario_id', scenario.id).delete();
  if (springIds.length === 0) return;
  await ScenarioSpring.query(trx).insert(
    springIds.map((springId, position) => ({ scenarioId: scenario.id, position, workspaceId: scenario.workspaceId, springId })),
  );
}
