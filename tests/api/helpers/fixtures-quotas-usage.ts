import type { RouteFixture } from './route-fixtures.ts';

/** Requests for the quota, usage and sweep-estimate routes, for the authorization matrix and bad-input tests. */
export const quotasUsageFixtures: Record<string, RouteFixture> = {
  getQuotas: { prepare: async () => ({ path: '/quotas' }) },
  setWorkspaceQuota: { prepare: async () => ({ path: '/quotas/workspace', body: { monthlyComputeUnits: 50_000 } }) },
  setMemberQuota: {
    prepare: async ({ target }) => ({ path: `/quotas/members/${target.members.builder.id}`, body: { monthlyComputeUnits: 5000 } }),
  },
  getUsage: { prepare: async () => ({ path: '/usage', query: { month: new Date().toISOString().slice(0, 7) } }) },
  estimateSweep: {
    foreignStatus: 404,
    prepare: async ({ world, target }) => ({
      path: '/sweeps/estimate',
      body: { scenarioId: await world.scenario(target, 'engineer'), level: 'dynamic', axes: [{ path: 'exhaust.ratio', values: [1.2, 1.6] }] },
    }),
  },
};
