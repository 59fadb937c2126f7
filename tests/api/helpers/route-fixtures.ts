import { ROLES as ROLE_SETS } from '@crackpoint/api';
import { defaultScenario } from '@crackpoint/sim-core';
import { TEST_PASSWORD, type Role, type TestWorkspace } from './context.ts';
import { billingFixtures } from './fixtures-billing.ts';
import { mailSharingFixtures } from './fixtures-mail-sharing.ts';
import { quotasUsageFixtures } from './fixtures-quotas-usage.ts';
import { queueHealthFixtures } from './fixtures-queue-health.ts';
import { sweepResultsFixtures } from './fixtures-sweep-results.ts';
import { LIBRARY_TABLES, PART_SAMPLES, type LibraryTable, type Side, type World } from './world.ts';
import { datalogsFixtures } from './fixtures-datalogs.ts';

/** One cell of the authorization matrix. */
export interface Call {
  world: World;
  role: Role;
  side: Side;
  /** Whose member sends the request. */
  caller: TestWorkspace;
  /** Whose records the request names. */
  target: TestWorkspace;
  /**
   * Which member of `target` owns (made, started, uploaded) the record the request names, where the route lets some
   * roles act only on their own (`ownOnly`): the caller's own role, or another member's.
   */
  owner: Role;
}

export interface Prepared {
  path: string;
  query?: Record<string, string | number>;
  body?: unknown;
  /** Sent instead of the caller's usual token (a route that spends or changes the token). */
  token?: string;
  /** Further request headers (a webhook's signature). */
  headers?: Record<string, string>;
  /** A file sent as multipart/form-data (a route whose requestBody is multipart); `body` then holds its text fields. */
  file?: { field: string; filename: string; content: Buffer; contentType: string };
}

/**
 * A valid request for a route of the table, made for any role and either workspace. The matrix and the
 * bad-input tests build their requests from these; a route without one fails the coverage test.
 */
export interface RouteFixture {
  prepare(call: Call): Promise<Prepared>;
  /** For `reference` routes: the status when the body names another workspace's record. */
  foreignStatus?: number;
}

/** A record a member of this role can own: their own where the role makes records, else an engineer's. */
export const authorOf = (role: Role): Role => ((ROLE_SETS.compute as readonly Role[]).includes(role) ? role : 'engineer');

export const routeFixtures: Record<string, RouteFixture> = {
  getHealth: { prepare: async () => ({ path: '/health' }) },
  getOpenApi: { prepare: async () => ({ path: '/openapi.json' }) },
  signIn: {
    prepare: async ({ caller, role }) => ({ path: '/auth/sign-in', body: { email: caller.members[role].email, password: TEST_PASSWORD } }),
  },
  register: {
    prepare: async ({ world }) => ({
      path: '/auth/register',
      body: { workspaceName: 'Matrix Motorsport', displayName: 'New admin', email: world.registrationEmail(), password: 'a long enough secret' },
    }),
  },
  signOut: {
    prepare: async ({ world, caller, role }) => ({ path: '/auth/sign-out', body: {}, token: (await world.member(caller, role)).token }),
  },
  changePassword: {
    prepare: async ({ world, caller, role }) => ({
      path: '/auth/change-password',
      body: { currentPassword: TEST_PASSWORD, newPassword: 'another long secret' },
      token: (await world.member(caller, role)).token,
    }),
  },
  getMe: { prepare: async () => ({ path: '/me' }) },

  listScenarios: { prepare: async () => ({ path: '/scenarios', query: { limit: 200 } }) },
  getScenario: { prepare: async ({ world, target }) => ({ path: `/scenarios/${await world.scenario(target, 'engineer')}` }) },
  createScenario: {
    prepare: async ({ world, target }) => ({
      path: '/scenarios',
      body: { name: 'Matrix scenario', data: defaultScenario(), sources: { springIds: [await world.part(target, 'springs')] } },
    }),
  },
  updateScenario: {
    prepare: async ({ world, target, owner }) => ({
      path: `/scenarios/${await world.scenario(target, owner)}`,
      body: { name: 'Matrix rename', data: defaultScenario(), version: 1 },
    }),
  },

  deleteScenario: {
    prepare: async ({ world, target, owner }) => ({ path: `/scenarios/${await world.scenario(target, owner)}` }),
  },

  cloneScenario: {
    prepare: async ({ world, target }) => ({ path: `/scenarios/${await world.scenario(target, 'engineer')}/clone`, body: {} }),
  },
  balanceScenario: { prepare: async ({ world, target }) => ({ path: `/scenarios/${await world.scenario(target, 'engineer')}/balance` }) },
  pullScenario: { prepare: async ({ world, target, owner }) => ({ path: `/scenarios/${await world.scenario(target, owner)}/pull` }) },
  solveScenario: {
    prepare: async ({ world, target }) => ({
      path: `/scenarios/${await world.scenario(target, 'engineer')}/solve`,
      body: { unknown: 'seat-force', target: 'crack', targetBoostPa: 82_737 },
    }),
  },

  computeBalance: { prepare: async () => ({ path: '/balance', body: { scenario: defaultScenario() } }) },

  createSweep: {
    foreignStatus: 404,
    prepare: async ({ world, target, owner }) => ({
      path: '/sweeps',
      body: { scenarioId: await world.scenario(target, owner), axes: [{ path: 'exhaust.ratio', values: [1.2, 1.6] }] },
    }),
  },
  listSweeps: { prepare: async () => ({ path: '/sweeps', query: { limit: 200 } }) },
  getSweep: {
    prepare: async ({ world, target }) => ({ path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'))}` }),
  },
  cancelSweep: {
    prepare: async ({ world, target, owner }) => ({
      path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'), owner)}/cancel`,
      body: {},
    }),
  },
  getSweepSurface: {
    prepare: async ({ world, target }) => ({
      path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'))}/surface`,
      query: { x: 0, y: 1 },
    }),
  },
  ...billingFixtures,
  ...quotasUsageFixtures,
  ...mailSharingFixtures,
  ...datalogsFixtures,
  ...sweepResultsFixtures,
  ...queueHealthFixtures,
};

/** Route ids of a library kind, as the API names them (listSprings, getSpring, …). */
const LIBRARY_NAMES: Record<LibraryTable, { plural: string; singular: string }> = {
  wastegates: { plural: 'Wastegates', singular: 'Wastegate' },
  springs: { plural: 'Springs', singular: 'Spring' },
  turbos: { plural: 'Turbos', singular: 'Turbo' },
  engines: { plural: 'Engines', singular: 'Engine' },
  supplies: { plural: 'Supplies', singular: 'Supply' },
};

const unique = () => Math.random().toString(36).slice(2, 10);

for (const table of LIBRARY_TABLES) {
  const { plural, singular } = LIBRARY_NAMES[table];
  const collection = `/library/${table}`;
  routeFixtures[`list${plural}`] = { prepare: async () => ({ path: collection, query: { limit: 200, archived: 'all' } }) };
  routeFixtures[`get${singular}`] = { prepare: async ({ world, target }) => ({ path: `${collection}/${await world.part(target, table)}` }) };
  routeFixtures[`create${singular}`] = {
    prepare: async () => ({ path: collection, body: { name: `Matrix ${singular} ${unique()}`, data: PART_SAMPLES[table]() } }),
  };
  routeFixtures[`update${singular}`] = {
    prepare: async ({ world, target }) => ({
      path: `${collection}/${await world.part(target, table)}`,
      body: { name: `Renamed ${singular} ${unique()}`, version: 1 },
    }),
  };
  routeFixtures[`delete${singular}`] = { prepare: async ({ world, target }) => ({ path: `${collection}/${await world.part(target, table)}` }) };
}
