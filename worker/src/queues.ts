import { z } from 'zod';

/** The BullMQ queue that carries sweep chunks from the API to the workers. */
export const SWEEP_QUEUE = 'sweep-chunks';
export const SWEEP_CHUNK_JOB = 'chunk';

export const sweepChunkJobSchema = z.strictObject({
  sweepId: z.uuid(),
  chunkIndex: z.number().int().min(0),
});
export type SweepChunkJob = z.infer<typeof sweepChunkJobSchema>;

/**
 * One id per chunk, so a chunk enqueued twice is one job and a retried job rewrites the same rows.
 * BullMQ refuses ":" in custom ids; a uuid and an integer never contain ".".
 */
export function jobIdFor(job: SweepChunkJob): string {
  return `${job.sweepId}.${job.chunkIndex}`;
}

/** Retries are for transient faults (database or Redis briefly away); bad input fails at once. */
export const SWEEP_CHUNK_JOB_OPTIONS = {
  attempts: 5,
  backoff: { type: 'exponential', delay: 2000 },
  removeOnComplete: true,
  removeOnFail: { age: 7 * 24 * 3600 },
} as const;
