import type { Knex } from 'knex';
import type { SweepQueue } from './sweeps.ts';

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

export interface Health {
  status: 'ok' | 'degraded';
  database: 'ok' | 'down';
  queue: 'ok' | 'down';
}

export async function checkHealth(knex: Knex, queue: SweepQueue): Promise<Health> {
  const [database, sweepQueue] = await Promise.all([
    check(() => knex.raw('select 1')),
    check(() => queue.getJobCounts('waiting')),
  ]);
  const ok = database === 'ok' && sweepQueue === 'ok';
  return { status: ok ? 'ok' : 'degraded', database, queue: sweepQueue };
}
