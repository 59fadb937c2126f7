import type { Knex } from 'knex';
import type { SweepQueue } from './sweeps.ts';

/** Redis answers in milliseconds; past this the page says the queue is out of reach rather than hang. */
const QUEUE_TIMEOUT_MS = 2000;

export interface QueueCounts {
  waiting: number;
  active: number;
  delayed: number;
  failed: number;
  /** Worker processes holding a connection to the queue right now. */
  workers: number;
}

export interface QueueHealth {
  /** The sweep queue as a whole (every workspace's chunks); null when Redis does not answer. */
  queue: QueueCounts | null;
  /** This workspace's sweeps not finished yet, from PostgreSQL, the record of what must run. */
  sweeps: { queued: number; running: number };
  /** Seconds since this workspace's oldest chunk not done (of a queued or running sweep) was created; null when none. */
  oldestOpenChunkSeconds: number | null;
  checkedAt: string;
}

function withTimeout<T>(work: Promise<T>): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_resolve, reject) => {
    timer = setTimeout(() => reject(new Error('the sweep queue did not answer in time')), QUEUE_TIMEOUT_MS);
  });
  return Promise.race([work, timeout]).finally(() => clearTimeout(timer));
}

async function readQueue(queue: SweepQueue): Promise<QueueCounts | null> {
  try {
    const [counts, workers] = await withTimeout(Promise.all([queue.getJobCounts('waiting', 'active', 'delayed', 'failed'), queue.getWorkersCount()]));
    return {
      waiting: counts.waiting ?? 0,
      active: counts.active ?? 0,
      delayed: counts.delayed ?? 0,
      failed: counts.failed ?? 0,
      workers,
    };
  } catch {
    return null;
  }
}

export async function getQueueHealth(knex: Knex, queue: SweepQueue, workspaceId: string): Promise<QueueHealth> {
  const [queueCounts, sweepRows, oldest] = await Promise.all([
    readQueue(queue),
    knex('sweeps')
      .where({ workspace_id: workspaceId })
      .whereIn('state', ['queued', 'running'])
      .groupBy('state')
      .select<{ state: 'queued' | 'running'; count: string }[]>('state', knex.raw('count(*) as count')),
    knex('sweep_chunks as c')
      .join('sweeps as s', 's.id', 'c.sweep_id')
      .where('s.workspace_id', workspaceId)
      .whereIn('s.state', ['queued', 'running'])
      .whereNot('c.state', 'done')
      // The database's clock on both sides, so the age does not depend on the API host's clock.
      .first<{ seconds: string | null } | undefined>(knex.raw('extract(epoch from now() - min(c.created_at)) as seconds')),
  ]);
  const sweeps = { queued: 0, running: 0 };
  for (const row of sweepRows) sweeps[row.state] = Number(row.count);
  const seconds = oldest?.seconds;
  return {
    queue: queueCounts,
    sweeps,
    oldestOpenChunkSeconds: seconds === null || seconds === undefined ? null : Math.max(0, Math.floor(Number(seconds))),
    checkedAt: new Date().toISOString(),
  };
}
