import { describe, expect, it } from 'vitest';
import { jobIdFor, SWEEP_CHUNK_JOB_OPTIONS, SWEEP_QUEUE, sweepChunkJobSchema } from '../src/queues.ts';

const sweepId = '6f1c2d3e-4b5a-4c6d-8e7f-901234567890';

describe('jobIdFor', () => {
  it('joins the sweep id and the chunk index with a dot', () => {
    expect(jobIdFor({ sweepId, chunkIndex: 7 })).toBe(`${sweepId}.7`);
  });

  it('never contains a colon, which BullMQ refuses in custom ids', () => {
    expect(jobIdFor({ sweepId, chunkIndex: 0 })).not.toContain(':');
  });

  it('gives different chunks different ids and the same chunk the same id', () => {
    expect(jobIdFor({ sweepId, chunkIndex: 1 })).not.toBe(jobIdFor({ sweepId, chunkIndex: 10 }));
    expect(jobIdFor({ sweepId, chunkIndex: 3 })).toBe(jobIdFor({ sweepId, chunkIndex: 3 }));
  });
});

describe('sweepChunkJobSchema', () => {
  it('accepts the contract payload', () => {
    expect(sweepChunkJobSchema.parse({ sweepId, chunkIndex: 0 })).toEqual({ sweepId, chunkIndex: 0 });
  });

  it.each([
    [{ sweepId: 'nope', chunkIndex: 0 }, 'sweepId'],
    [{ sweepId, chunkIndex: -1 }, 'chunkIndex'],
    [{ sweepId, chunkIndex: 1.5 }, 'chunkIndex'],
    [{ sweepId }, 'chunkIndex'],
    [{ sweepId, chunkIndex: 0, extra: true }, ''],
  ])('refuses %j', (payload, field) => {
    const parsed = sweepChunkJobSchema.safeParse(payload);
    expect(parsed.success).toBe(false);
    expect(parsed.error?.issues[0]?.path.join('.')).toBe(field);
  });
});

describe('queue constants', () => {
  it('name the contract queue and retry with backoff', () => {
    expect(SWEEP_QUEUE).toBe('sweep-chunks');
    expect(SWEEP_CHUNK_JOB_OPTIONS.attempts).toBeGreaterThan(1);
    expect(SWEEP_CHUNK_JOB_OPTIONS.backoff.type).toBe('exponential');
    expect(SWEEP_CHUNK_JOB_OPTIONS.removeOnComplete).toBe(true);
  });
});
