import type { Queue } from 'bullmq';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { jobIdFor, SWEEP_CHUNK_JOB, SWEEP_CHUNK_JOB_OPTIONS, type SweepChunkJob } from './queues.ts';

/** What enqueueing and reconciliation need of the sweep queue. */
export type ChunkQueue = Pick<Queue<SweepChunkJob>, 'addBulk' | 'getJob'>;

const ENQUEUE_BATCH = 500;
const LOOKUP_BATCH = 200;

/** Adds one job per chunk under the job id rule; a chunk already queued under that id is left as it is. */
export async function enqueueChunks(queue: Pick<ChunkQueue, 'addBulk'>, chunks: readonly SweepChunkJob[]): Promise<void> {
  for (let first = 0; first < chunks.length; first += ENQUEUE_BATCH) {
    await queue.addBulk(
      chunks.slice(first, first + ENQUEUE_BATCH).map((data) => ({
        name: SWEEP_CHUNK_JOB,
        data,
        opts: { ...SWEEP_CHUNK_JOB_OPTIONS, jobId: jobIdFor(data) },
      })),
    );
  }
}

export interface ReconcileOutcome {
  /** Unfinished chunks of unfinished sweeps found in PostgreSQL. */
  checked: number;
  /** Of those, the ones Redis had no job for, enqueued again. */
  enqueued: number;
}

/**
 * PostgreSQL is the record of what must run; Redis only carries it. Every chunk not done, of a sweep
 * still queued or running, whose job Redis no longer holds (flushed, restarted, lost) is enqueued
 * again under the same job id. Running it twice is harmless: the id rule keeps one job per chunk and
 * the processor skips a chunk already done.
 */
export async function reconcileSweeps(knex: Knex, queue: ChunkQueue): Promise<ReconcileOutcome> {
  const open = await knex('sweep_chunks as c')
    .join('sweeps as s', 's.id', 'c.sweep_id')
    .whereIn('s.state', ['queued', 'running'])
    .whereNot('c.state', 'done')
    .orderBy('s.created_at')
    .orderBy('c.chunk_index')
    .select<{ sweep_id: string; chunk_index: number }[]>('c.sweep_id', 'c.chunk_index');

  const missing: SweepChunkJob[] = [];
  for (let first = 0; first < open.length; first += LOOKUP_BATCH) {
    const slice = open.slice(first, first + LOOKUP_BATCH).map((row) => ({ sweepId: row.sweep_id, chunkIndex: row.chunk_index }));
    const jobs = await Promise.all(slice.map((chunk) => queue.getJob(jobIdFor(chunk))));
    slice.forEach((chunk, i) => {
      if (!jobs[i]) missing.push(chunk);
    });
  }
  await enqueueChunks(queue, missing);
  return { checked: open.length, enqueued: missing.length };
}

export interface Reconciler {
  /** Resolves with the first pass (at start-up). */
  readonly firstPass: Promise<ReconcileOutcome | undefined>;
  stop(): Promise<void>;
}

/** Reconciles now and then every `intervalMs`; a pass that fails is logged and the next one tries again. */
export function startReconciler(options: { knex: Knex; queue: ChunkQueue; intervalMs: number; logger?: Logger }): Reconciler {
  const { knex, queue, logger } = options;
  let running: Promise<ReconcileOutcome | undefined> = Promise.resolve(undefined);
  let stopped = false;
  const pass = (): Promise<ReconcileOutcome | undefined> => {
    running = reconcileSweeps(knex, queue).then(
      (outcome) => {
        if (outcome.enqueued > 0) logger?.warn(outcome, 'sweep chunks missing from the queue were enqueued again');
        return outcome;
      },
      (error: unknown) => {
        logger?.warn({ err: error }, 'reconciling sweep chunks failed; trying again later');
        return undefined;
      },
    );
    return running;
  };
  const firstPass = pass();
  const timer = setInterval(() => {
    if (!stopped) void running.then(pass);
  }, options.intervalMs);
  // The reconciler never keeps a process alive on its own.
  timer.unref();
  return {
    firstPass,
    async stop() {
      stopped = true;
      clearInterval(timer);
      await running;
    },
  };
}
