import { readFileSync } from 'node:fs';
import { ROLES as ROLE_SETS } from '@crackpoint/api';
import { parseScenario } from '@crackpoint/sim-core';
import request from 'supertest';
import type { Role, TestWorkspace } from './context.ts';
import type { RouteFixture } from './route-fixtures.ts';
import type { World } from './world.ts';

const EXAMPLES = new URL('../../../examples/', import.meta.url);

/** The invented log of the examples folder: a 2.0 L four's pull, 20 samples a second. */
export const EXAMPLE_LOG = readFileSync(new URL('four-cylinder-pull.datalog.csv', EXAMPLES));
/** The scenario that log was made from. */
export function exampleScenario() {
  const parsed = parseScenario(JSON.parse(readFileSync(new URL('four-cylinder-boost-only.json', EXAMPLES), 'utf8')));
  if (!parsed.ok) throw new Error('examples/four-cylinder-boost-only.json is not a valid scenario');
  return parsed.scenario;
}

/** The mapping a member confirms for the example log. */
export const EXAMPLE_MAPPING = {
  time: { column: 'Time (s)', unit: 's' },
  boost: { column: 'Boost (psi)', unit: 'psi' },
  rpm: { column: 'Engine speed (rpm)', unit: 'rpm' },
  drive: { column: 'Drive pressure (psi)', unit: 'psi' },
  duty: null,
  supply: null,
};

export const exampleFile = (filename = 'four-cylinder-pull.csv') => ({ field: 'file', filename, content: EXAMPLE_LOG, contentType: 'text/csv' });

/** A log a member of this role may change: their own where the role only changes its own. */
const authorOf = (role: Role): Role => ((ROLE_SETS.compute as readonly Role[]).includes(role) ? role : 'engineer');

function tokenIn(world: World, workspace: TestWorkspace, role: Role): string {
  return (workspace.id === world.own.id ? world.tokens.own : world.tokens.foreign)[role];
}

/** The example log uploaded by `role` of the workspace through the API, its mapping confirmed unless asked not to. */
export async function datalogIn(world: World, workspace: TestWorkspace, role: Role, confirmed = true): Promise<string> {
  const token = tokenIn(world, workspace, role);
  const uploaded = await request(world.ctx.app)
    .post('/api/datalogs')
    .set('Authorization', `Bearer ${token}`)
    .attach('file', EXAMPLE_LOG, { filename: 'four-cylinder-pull.csv', contentType: 'text/csv' });
  if (uploaded.status !== 201) throw new Error(`upload gave ${uploaded.status}: ${JSON.stringify(uploaded.body)}`);
  const id = world.track(workspace, uploaded.body.datalog.id as string);
  if (confirmed) {
    const mapped = await request(world.ctx.app).put(`/api/datalogs/${id}/mapping`).set('Authorization', `Bearer ${token}`).send(EXAMPLE_MAPPING);
    if (mapped.status !== 200) throw new Error(`mapping gave ${mapped.status}: ${JSON.stringify(mapped.body)}`);
  }
  return id;
}

/** The example log's own scenario, written straight to the database. */
export async function exampleScenarioIn(world: World, workspace: TestWorkspace, owner: Role = 'engineer'): Promise<string> {
  const [row] = await world.ctx
    .knex('scenarios')
    .insert({ workspace_id: workspace.id, owner_id: workspace.members[owner].id, name: 'Harrow Lane 2.0 L four', data: JSON.stringify(exampleScenario()) })
    .returning<{ id: string }[]>('id');
  if (!row) throw new Error('scenario not written');
  return world.track(workspace, row.id);
}

export const datalogsFixtures: Record<string, RouteFixture> = {
  uploadDatalog: { prepare: async () => ({ path: '/datalogs', file: exampleFile() }) },
  listDatalogs: { prepare: async () => ({ path: '/datalogs', query: { limit: 200 } }) },
  getDatalog: { prepare: async ({ world, target }) => ({ path: `/datalogs/${await datalogIn(world, target, 'engineer')}` }) },
  updateDatalogMapping: {
    prepare: async ({ world, target, role }) => ({
      path: `/datalogs/${await datalogIn(world, target, authorOf(role), false)}/mapping`,
      body: EXAMPLE_MAPPING,
    }),
  },
  deleteDatalog: { prepare: async ({ world, target, owner }) => ({ path: `/datalogs/${await datalogIn(world, target, owner)}` }) },
  overlayDatalog: {
    prepare: async ({ world, target, owner }) => ({
      path: `/datalogs/${await datalogIn(world, target, 'engineer')}/overlay`,
      body: { scenarioId: await exampleScenarioIn(world, target, owner) },
    }),
  },
  fitDatalog: {
    prepare: async ({ world, target, owner }) => ({
      path: `/datalogs/${await datalogIn(world, target, 'engineer')}/fit`,
      body: { scenarioId: await exampleScenarioIn(world, target, owner), name: 'Harrow Lane 2.0 L four, fitted' },
    }),
  },
};
