import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { createSweepWorker, jobIdFor, startReconciler, type Reconciler, type SweepWorker } from '@crackpoint/worker';
import request from 'supertest';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

/**
 * Faults around a running sweep: cancel, Redis losing its jobs, a worker killed outright. Dynamic
 * sweeps, so a sweep runs for seconds and the fault lands in the middle of it.
 */
let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
let scenarioId: string;
const cleanups: (() => Promise<void>)[] = [];

const repoRoot = fileURLToPath(new URL('../../', import.meta.url));
const FAULT_TIMEOUT_MS = 90_000;

beforeAll(async () => {
  ctx = createTestContext({ SWEEP_DYNAMIC_CHUNK_SIZE: '2' });
  shop = await createWorkspace(ctx.knex, 'sweep-faults');
  tokens = await tokensFor(ctx.app, shop);
  const created = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'Faults base' });
  scenarioId = created.body.scenario.id;
});

afterEach(async () => {
  for (const cleanup of cleanups.splice(0).reverse()) await cleanup();
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

function startWorker(options: { concurrency: number; lockDurationMs?: number; stalledIntervalMs?: number }): SweepWorker {
  const worker = createSweepWorker({ knex: ctx.knex, redis: ctx.config.redisUrl, queueName: ctx.queueName, ...options });
  cleanups.push(() => worker.close());
  return worker;
}

function startReconciling(intervalMs: number): Reconciler {
  const reconciler = startReconciler({ knex: ctx.knex, queue: ctx.queue, intervalMs });
  cleanups.push(() => reconciler.stop());
  return reconciler;
}

/** A one-axis dynamic sweep of `count` seat forces (two points a chunk). */
async function createDynamicSweep(count: number): Promise<string> {
  const values = Array.from({ length: count }, (_, i) => 100 + 5 * i);
  const response = await request(ctx.app)
    .post('/api/sweeps')
    .set(bearer(tokens.engineer))
    .send({ scenarioId, level: 'dynamic', axes: [{ path: 'springs.0.seatForceN', values }] });
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body.sweep.id;
}

const sweepRow = (id: string) => ctx.knex('sweeps').where({ id }).first();

async function waitFor<T>(what: string, probe: () => Promise<T | undefined>, timeoutMs = 60_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value !== undefined) return value;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await sleep(50);
  }
}

const waitForPoints = (id: string, atLeast: number) =>
  waitFor(`${atLeast} points of ${id}`, async () => {
    const row = await sweepRow(id);
    return row.points_done >= atLeast ? row : undefined;
  });

const waitForEnd = (id: string) =>
  waitFor(`the end of ${id}`, async () => {
    const row = await sweepRow(id);
    return ['done', 'failed', 'cancelled'].includes(row.state) ? row : undefined;
  });

/** Exactly one row per point: the indices are 0 … n−1, each once. */
async function expectOneRowPerPoint(id: string, pointCount: number) {
  const indices = await ctx.knex('sweep_points').where({ sweep_id: id }).orderBy('point_index').pluck('point_index');
  expect(indices).toEqual(Array.from({ length: pointCount }, (_, i) => i));
}

describe('POST /api/sweeps/:id/cancel', () => {
  it('stops a running sweep: state cancelled, no point written after it, waiting jobs removed', { timeout: FAULT_TIMEOUT_MS }, async () => {
    startWorker({ concurrency: 1 });
    const sweepId = await createDynamicSweep(12);
    await waitForPoints(sweepId, 2);

    // A builder may not stop a sweep another member started; the sweep runs on.
    const refused = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.builder));
    expect(refused.status, JSON.stringify(refused.body)).toBe(403);
    expect(refused.body.error.message).toBe('A builder cancels only the sweeps they started.');
    expect(['queued', 'running']).toContain((await sweepRow(sweepId)).state);

    const response = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.engineer));
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body.sweep.state).toBe('cancelled');
    const cancelled = await sweepRow(sweepId);
    expect(cancelled.state).toBe('cancelled');
    expect(cancelled.finished_at).toBeInstanceOf(Date);

    const openChunks = await ctx.knex('sweep_chunks').where({ sweep_id: sweepId }).whereNot({ state: 'done' }).pluck('chunk_index');
    expect(openChunks.length).toBeGreaterThan(0);
    for (const chunkIndex of openChunks) {
      const job = await ctx.queue.getJob(jobIdFor({ sweepId, chunkIndex }));
      // Only the chunk running at the moment of the cancel may still be in Redis, and it writes nothing more.
      if (job) expect(await job.getState()).toBe('active');
    }

    const written = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).pluck('point_index');
    // Longer than a batch of pulls takes: the running chunk has reached its next check by now.
    await sleep(2500);
    expect(await ctx.knex('sweep_points').where({ sweep_id: sweepId }).pluck('point_index')).toEqual(written);
    const latest = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).max<{ at: Date }[]>('updated_at as at');
    expect(latest[0]!.at.getTime()).toBeLessThanOrEqual(cancelled.finished_at.getTime());
    expect(written.length).toBeLessThan(12);
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'cancelled', points_done: written.length });

    const again = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.engineer));
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('sweep_finished');
  });

  it('returns 403 to an analyst and leaves the sweep as it was', async () => {
    const sweepId = await createDynamicSweep(2);
    const response = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.analyst));
    expect(response.status).toBe(403);
    expect((await sweepRow(sweepId)).state).toBe('queued');
    await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.admin)).expect(200);
  });
});

describe('reconciliation', () => {
  it('enqueues again what Redis lost: a flush mid-sweep still ends with one row per point', { timeout: FAULT_TIMEOUT_MS }, async () => {
    startWorker({ concurrency: 2 });
    const sweepId = await createDynamicSweep(16);
    await waitForPoints(sweepId, 2);

    // Every key of this queue, as FLUSHALL would remove them, without touching other files' queues.
    const keys = await ctx.redis.keys(`bull:${ctx.queueName}:*`);
    expect(keys.length).toBeGreaterThan(0);
    await ctx.redis.del(...keys);
    expect(await ctx.queue.getJob(jobIdFor({ sweepId, chunkIndex: 7 }))).toBeUndefined();

    const reconciler = startReconciling(500);
    const first = await reconciler.firstPass;
    expect(first?.enqueued).toBeGreaterThan(0);

    const end = await waitForEnd(sweepId);
    expect(end).toMatchObject({ state: 'done', point_count: 16, points_done: 16, points_failed: 0 });
    await expectOneRowPerPoint(sweepId, 16);
  });

  it('finishes a sweep whose worker process was killed with SIGKILL mid-chunk', { timeout: FAULT_TIMEOUT_MS }, async () => {
    const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'worker/src/main.ts'], {
      cwd: repoRoot,
      env: {
        ...process.env,
        SWEEP_QUEUE_NAME: ctx.queueName,
        WORKER_CONCURRENCY: '2',
        // A short lock, so the survivor takes the dead worker's chunks up within seconds.
        WORKER_LOCK_DURATION_MS: '2000',
        LOG_LEVEL: 'silent',
      },
      stdio: 'ignore',
    });
    const exited = new Promise<NodeJS.Signals | null>((resolve) => child.once('exit', (_code, signal) => resolve(signal)));
    cleanups.push(async () => {
      if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
      await exited;
    });

    const sweepId = await createDynamicSweep(16);
    await waitForPoints(sweepId, 2);
    expect(child.kill('SIGKILL')).toBe(true);
    expect(await exited).toBe('SIGKILL');
    const atKill = await sweepRow(sweepId);
    expect(atKill.state).toBe('running');
    expect(atKill.points_done).toBeLessThan(16);

    startWorker({ concurrency: 2, lockDurationMs: 2000, stalledIntervalMs: 1000 });
    startReconciling(1000);
    const end = await waitForEnd(sweepId);
    expect(end).toMatchObject({ state: 'done', points_done: 16, points_failed: 0 });
    await expectOneRowPerPoint(sweepId, 16);
  });
});
