import type { RouteFixture } from './route-fixtures.ts';

/** The queue-health request, for the authorization matrix and bad-input tests. */
export const queueHealthFixtures: Record<string, RouteFixture> = {
  getQueueHealth: { prepare: async () => ({ path: '/queue-health' }) },
};
