import { UnrecoverableError, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { PointPool } from './points/point-pool.ts';
import { markSweepFailed, processSweepChunk, type SweepChunkOutcome } from './processors/sweep-chunk.ts';
import { SWEEP_QUEUE, sweepChunkJobSchema, type SweepChunkJob } from './queues.ts';

export interface SweepWorkerOptions {
  knex: Knex;
  /** A Redis URL (the worker opens and closes its own connection) or an ioredis client to reuse. */
  redis: string | Redis;
  /** Tests use a queue of their own; production uses SWEEP_QUEUE. */
  queueName?: string;
  concurrency?: number;
  /** Threads computing points; one per chunk running at once unless told. */
  threads?: number;
  /** How long a job's lock lasts unrenewed (BullMQ's lockDuration): past it a dead worker's chunk is taken for stalled. */
  lockDurationMs?: number;
  /** How often this worker looks for stalled chunks (BullMQ's stalledInterval). */
  stalledIntervalMs?: number;
  logger?: Logger;
}

export interface SweepWorker {
  readonly worker: Worker<SweepChunkJob, SweepChunkOutcome>;
  /** Waits for running chunks to finish, then closes the Redis connection it opened. */
  close(): Promise<void>;
}

export function createSweepWorker(options: SweepWorkerOptions): SweepWorker {
  const { knex, logger } = options;
  // BullMQ's blocking commands wait indefinitely; ioredis must not give up on them.
  const ownsConnection = typeof options.redis === 'string';
  const connection =
    typeof options.redis === 'string' ? new Redis(options.redis, { maxRetriesPerRequest: null }) : options.redis;

  // Points are computed in threads: this thread only moves rows, so it keeps renewing job locks.
  const concurrency = options.concurrency ?? 1;
  const pool = new PointPool(options.threads ?? concurrency);
  const worker = new Worker<SweepChunkJob, SweepChunkOutcome>(
    options.queueName ?? SWEEP_QUEUE,
    async (job: Job<SweepChunkJob, SweepChunkOutcome>) => {
      const payload = sweepChunkJobSchema.safeParse(job.data);
      if (!payload.success) throw new UnrecoverableError(`job ${job.id ?? '?'} has a payload that is not a sweep chunk`);
      return processSweepChunk({ knex, compute: pool.compute, ...(logger ? { logger } : {}) }, payload.data);
    },
    {
      connection,
      concurrency,
      autorun: true,
      ...(options.lockDurationMs ? { lockDuration: options.lockDurationMs } : {}),
      ...(options.stalledIntervalMs ? { stalledInterval: options.stalledIntervalMs } : {}),
    },
  );

  worker.on('failed', (job, error) => {
    if (!job) {
      logger?.error({ err: error }, 'sweep chunk job failed');
      return;
    }
    const final = error instanceof UnrecoverableError || error.name === 'UnrecoverableError' || job.attemptsMade >= (job.opts.attempts ?? 1);
    logger?.error({ err: error, jobId: job.id, attemptsMade: job.attemptsMade, final }, 'sweep chunk job failed');
    const payload = sweepChunkJobSchema.safeParse(job.data);
    if (final && payload.success) {
      markSweepFailed(knex, payload.data.sweepId).catch((markError: unknown) =>
        logger?.error({ err: markError, sweepId: payload.data.sweepId }, 'could not mark the sweep failed'),
      );
    }
  });
  worker.on('error', (error) => logger?.error({ err: error }, 'sweep worker error'));

  return {
    worker,
    async close() {
      await worker.close();
      await pool.close();
      if (ownsConnection) await connection.quit().catch(() => connection.disconnect());
    },
  };
}
