import { z } from 'zod';
import { defineRoute, Reply } from './route-def.ts';
import { checkHealth } from '../services/health.ts';

const healthSchema = z.object({
  status: z.enum(['ok', 'degraded']),
  database: z.enum(['ok', 'down']),
  queue: z.enum(['ok', 'down']),
});

export const healthRoutes = [
  defineRoute({
    id: 'getHealth',
    method: 'get',
    path: '/health',
    summary: 'Whether the database and the sweep queue answer',
    tag: 'Service',
    access: 'public',
    scope: 'public',
    success: { status: 200, description: 'Both answer (503 with the same body when one does not)', schema: healthSchema },
    errors: [503],
    handler: async ({ deps }) => {
      const health = await checkHealth(deps.knex, deps.queue);
      return new Reply(health.status === 'ok' ? 200 : 503, health);
    },
  }),
];
