import { UnrecoverableError, Worker, type Job } from 'bullmq';
import { Redis } from 'ioredis';
import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { markSweepFailed, processSweepChunk, type SweepChunkOutcome } from './processors/sweep-chunk.ts';
import { SWEEP_QUEUE, sweepChunkJobSchema, type SweepChunkJob } from './queues.ts';

export interface SweepWorkerOptions {
  knex: Knex;
  /** A Redis URL (the worker opens and closes its own connection) or an ioredis client to reuse. */
  redis: string | Redis;
  /** Tests use a queue of their own; production uses SWEEP_QUEUE. */
  queueName?: string;
  concurrency?: number;
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

  // Static points are closed-form and take microseconds, so chunks run in this process; the
  // dynamic level will need sandboxed processors to keep the event loop free.
  const worker = new Worker<SweepChunkJob, SweepChunkOutcome>(
    options.queueName ?? SWEEP_QUEUE,
    async (job: Job<SweepChunkJob, SweepChunkOutcome>) => {
      const payload = sweepChunkJobSchema.safeParse(job.data);
      if (!payload.success) throw new UnrecoverableError(`job ${job.id ?? '?'} has a payload that is not a sweep chunk`);
      return processSweepChunk({ knex, ...(logger ? { logger } : {}) }, payload.data);
    },
    { connection, concurrency: options.concurrency ?? 1, autorun: true },
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
      if (ownsConnection) await connection.quit().catch(() => connection.disconnect());
    },
  };
}
