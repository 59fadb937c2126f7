import { processSweepChunk } from '@crackpoint/worker';
import { UnrecoverableError } from 'bullmq';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type TestContext, type TestWorkspace } from './helpers/context.ts';

// No worker consumes this file's queue: the processor is driven by hand to show what a retried,
// duplicated or concurrent chunk does to the rows.
let ctx: TestContext;
let shop: TestWorkspace;
let token: string;
let scenarioId: string;

beforeAll(async () => {
  ctx = createTestContext({ SWEEP_CHUNK_SIZE: '4' });
  shop = await createWorkspace(ctx.knex, 'processor');
  token = (await tokensFor(ctx.app, shop)).engineer;
  const created = await request(ctx.app).post('/api/scenarios').set('Authorization', `Bearer ${token}`).send({ name: 'Processor base' });
  scenarioId = created.body.scenario.id;
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

async function newSweep(): Promise<string> {
  const response = await request(ctx.app)
    .post('/api/sweeps')
    .set('Authorization', `Bearer ${token}`)
    .send({
      scenarioId,
      axes: [
        { path: 'springs.0.seatForceN', values: [100, 129, 160] },
        { path: 'exhaust.ratio', range: { from: 1.2, to: 1.8, count: 3 } },
      ],
    });
  expect(response.status).toBe(201);
  return response.body.sweep.id;
}

const sweepRow = (id: string) => ctx.knex('sweeps').where({ id }).first();
const pointCount = async (id: string) =>
  Number((await ctx.knex('sweep_points').where({ sweep_id: id }).count<{ n: string }[]>('* as n'))[0]?.n);

describe('processSweepChunk on the real database', () => {
  it('moves the sweep to running with its first chunk and to done with its last', async () => {
    const sweepId = await newSweep();
    const first = await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 0 });
    expect(first).toMatchObject({ computed: 4, failed: 0, sweepState: 'running' });
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'running', points_done: 4, points_failed: 0, finished_at: null });
    expect((await sweepRow(sweepId)).started_at).toBeInstanceOf(Date);

    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    const last = await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 2 });
    expect(last).toMatchObject({ computed: 1, sweepState: 'done' });
    const done = await sweepRow(sweepId);
    expect(done).toMatchObject({ state: 'done', points_done: 9, points_failed: 0 });
    expect(done.finished_at).toBeInstanceOf(Date);
  });

  it('does not count a repeated chunk twice', async () => {
    const sweepId = await newSweep();
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    // A retry of a chunk that crashed after writing its points but before marking itself done.
    await ctx.knex('sweep_chunks').where({ sweep_id: sweepId, chunk_index: 1 }).update({ state: 'running' });
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    expect(await pointCount(sweepId)).toBe(4);
    expect((await sweepRow(sweepId)).points_done).toBe(4);
    const chunk = await ctx.knex('sweep_chunks').where({ sweep_id: sweepId, chunk_index: 1 }).first();
    expect(chunk).toMatchObject({ state: 'done', attempts: 2 });

    const duplicate = await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    expect(duplicate).toMatchObject({ computed: 0, skipped: 'chunk-already-done' });
    expect((await sweepRow(sweepId)).points_done).toBe(4);
  });

  it('finishes the sweep when its chunks complete at the same moment', async () => {
    const sweepId = await newSweep();
    await Promise.all([0, 1, 2].map((chunkIndex) => processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex })));
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'done', points_done: 9 });
    expect(await pointCount(sweepId)).toBe(9);
  });

  it('skips a sweep that no longer exists', async () => {
    const sweepId = await newSweep();
    await ctx.knex('sweeps').where({ id: sweepId }).delete();
    const outcome = await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 0 });
    expect(outcome).toMatchObject({ skipped: 'sweep-missing', computed: 0 });
    expect(await pointCount(sweepId)).toBe(0);
  });

  it('skips a cancelled sweep without writing points', async () => {
    const sweepId = await newSweep();
    await ctx.knex('sweeps').where({ id: sweepId }).update({ state: 'cancelled' });
    const outcome = await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 0 });
    expect(outcome).toMatchObject({ skipped: 'sweep-stopped' });
    expect(await pointCount(sweepId)).toBe(0);
  });

  it('fails a chunk the sweep does not have as unrecoverable', async () => {
    const sweepId = await newSweep();
    await expect(processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 3 })).rejects.toBeInstanceOf(UnrecoverableError);
  });
});
