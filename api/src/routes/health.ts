import { Router } from 'express';
import type { Knex } from 'knex';
import type { SweepQueue } from '../services/sweeps.ts';

const CHECK_TIMEOUT_MS = 2000;

async function check(probe: () => Promise<unknown>): Promise<'ok' | 'down'> {
  let timer: NodeJS.Timeout | undefined;
  try {
    await Promise.race([
      probe(),
      new Promise((_resolve, reject) => {
        timer = setTimeout(() => reject(new Error('timed out')), CHECK_TIMEOUT_MS);
      }),
    ]);
    return 'ok';
  } catch {
    return 'down';
  } finally {
    clearTimeout(timer);
  }
}

export function healthRoutes(knex: Knex, queue: SweepQueue): Router {
  const router = Router();
  router.get('/health', async (_req, res) => {
    const [database, sweepQueue] = await Promise.all([
      check(() => knex.raw('select 1')),
      check(() => queue.getJobCounts('waiting')),
    ]);
    const ok = database === 'ok' && sweepQueue === 'ok';
    res.status(ok ? 200 : 503).json({ status: ok ? 'ok' : 'degraded', database, queue: sweepQueue });
  });
  return router;
}
