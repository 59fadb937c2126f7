import type { RouteFixture } from './route-fixtures.ts';
import type { TestWorkspace } from './context.ts';
import type { World } from './world.ts';

/** A sweep of the workspace that has finished, so its event stream ends at once. */
async function doneSweep(world: World, target: TestWorkspace): Promise<string> {
  const id = await world.sweep(target, await world.scenario(target, 'engineer'));
  await world.ctx.knex('sweeps').where({ id }).update({ state: 'done', started_at: world.ctx.knex.fn.now(), finished_at: world.ctx.knex.fn.now() });
  return id;
}

/** Requests for the sweep-result routes (events, points, CSV, one point's pull) for the matrix and bad-input tests. */
export const sweepResultsFixtures: Record<string, RouteFixture> = {
  getSweepEvents: { prepare: async ({ world, target }) => ({ path: `/sweeps/${await doneSweep(world, target)}/events` }) },
  listSweepPoints: {
    prepare: async ({ world, target }) => ({
      path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'))}/points`,
      query: { sort: 'crackBoostPa', order: 'desc', limit: 10 },
    }),
  },
  exportSweepPoints: {
    prepare: async ({ world, target }) => ({
      path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'))}/points.csv`,
      query: { units: 'us' },
    }),
  },
  pullSweepPoint: {
    prepare: async ({ world, target, owner }) => ({
      path: `/sweeps/${await world.sweep(target, await world.scenario(target, 'engineer'), owner)}/points/3/pull`,
      body: {},
    }),
  },
};
