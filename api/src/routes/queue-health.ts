import { z } from 'zod';
import { getQueueHealth } from '../services/queue-health.ts';
import { defineRoute } from './route-def.ts';

const count = z.number().int().min(0);

const queueHealthSchema = z.object({
  queue: z
    .object({ waiting: count, active: count, delayed: count, failed: count, workers: count })
    .nullable()
    .describe("The sweep queue's jobs across every workspace and the workers connected; null when the queue does not answer"),
  sweeps: z.object({ queued: count, running: count }).describe("This workspace's sweeps not finished"),
  oldestOpenChunkSeconds: count.nullable().describe("Age in seconds of this workspace's oldest chunk not done; null when none"),
  checkedAt: z.iso.datetime(),
});

export const queueHealthResponseSchema = z.object({ queueHealth: queueHealthSchema });

export const queueHealthRoutes = [
  defineRoute({
    id: 'getQueueHealth',
    method: 'get',
    path: '/queue-health',
    summary: "The sweep queue's waiting, running, delayed and failed jobs, the workers connected, and this workspace's unfinished sweeps",
    tag: 'Usage',
    // Queue load is operations detail for whoever runs the workspace (DESIGN.md's team and usage part).
    access: ['admin'] as const,
    scope: 'collection',
    success: { status: 200, description: 'The queue and this workspace\'s unfinished work', schema: queueHealthResponseSchema },
    handler: async ({ deps, auth }) => ({ queueHealth: await getQueueHealth(deps.knex, deps.queue, auth.workspaceId) }),
  }),
];
