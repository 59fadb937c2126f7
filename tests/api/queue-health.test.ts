import { createApp, type SweepQueue } from '@crackpoint/api';
import { Worker } from 'bullmq';
import { Redis } from 'ioredis';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

// No worker processes this file's queue (the one started below never runs), so what a sweep enqueues
// stays waiting and the counts read back are exactly this file's.
let ctx: TestContext;
let workspace: TestWorkspace;
let tokens: Record<Role, string>;

beforeAll(async () => {
  ctx = createTestContext({ SWEEP_CHUNK_SIZE: '500' });
  workspace = await createWorkspace(ctx.knex, 'queue-health');
  tokens = await tokensFor(ctx.app, workspace);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, workspace);
  await ctx.close();
});

const as = (token: string) => ({ Authorization: `Bearer ${token}` });

describe('GET /api/queue-health', () => {
  it('answers an idle workspace with empty counts and no open chunk', async () => {
    const response = await request(ctx.app).get('/api/queue-health').set(as(tokens.admin));
    expect(response.status).toBe(200);
    expect(response.body.queueHealth).toMatchObject({
      queue: { waiting: 0, active: 0, delayed: 0, failed: 0, workers: 0 },
      sweeps: { queued: 0, running: 0 },
      oldestOpenChunkSeconds: null,
    });
    expect(Date.parse(response.body.queueHealth.checkedAt)).not.toBeNaN();
  });

  it('counts a queued sweep, its waiting chunks, the oldest chunk and a connected worker', async () => {
    const scenario = await request(ctx.app).post('/api/scenarios').set(as(tokens.engineer)).send({ name: 'Queue health base' });
    expect(scenario.status).toBe(201);
    const sweep = await request(ctx.app)
      .post('/api/sweeps')
      .set(as(tokens.engineer))
      .send({ scenarioId: scenario.body.scenario.id, level: 'static', axes: [{ path: 'springs.0.seatForceN', range: { from: 100, to: 200, count: 800 } }] });
    expect(sweep.status, JSON.stringify(sweep.body)).toBe(201);
    // Backdated so the age shows the oldest chunk, not the moment of the request.
    await ctx.knex('sweep_chunks').where({ sweep_id: sweep.body.sweep.id, chunk_index: 0 }).update({ created_at: ctx.knex.raw("now() - interval '90 seconds'") });

    const connection = new Redis(ctx.config.redisUrl, { maxRetriesPerRequest: null });
    const worker = new Worker(ctx.queueName, async () => undefined, { connection, autorun: false });
    try {
      await worker.waitUntilReady();
      const response = await request(ctx.app).get('/api/queue-health').set(as(tokens.admin));
      expect(response.status).toBe(200);
      const health = response.body.queueHealth;
      expect(health.queue).toMatchObject({ waiting: 2, active: 0, delayed: 0, failed: 0 });
      expect(health.queue.workers).toBeGreaterThanOrEqual(1);
      expect(health.sweeps).toEqual({ queued: 1, running: 0 });
      expect(health.oldestOpenChunkSeconds).toBeGreaterThanOrEqual(90);
      expect(health.oldestOpenChunkSeconds).toBeLessThan(600);
    } finally {
      await worker.close();
      await connection.quit();
    }
  });

  it('still answers from PostgreSQL when the queue does not', async () => {
    const broken: SweepQueue = {
      name: 'unreachable',
      addBulk: () => Promise.reject(new Error('Redis is away')),
      getJobCounts: () => Promise.reject(new Error('Redis is away')),
      getWorkersCount: () => Promise.reject(new Error('Redis is away')),
      getJob: () => Promise.reject(new Error('Redis is away')),
      remove: () => Promise.reject(new Error('Redis is away')),
    };
    const app = createApp({ knex: ctx.knex, queue: broken, config: ctx.config, pulls: ctx.pulls });
    const response = await request(app).get('/api/queue-health').set(as(tokens.admin));
    expect(response.status).toBe(200);
    expect(response.body.queueHealth.queue).toBeNull();
    expect(response.body.queueHealth.sweeps).toEqual({ queued: 1, running: 0 });
  });

  it('is for admins only', async () => {
    const response = await request(ctx.app).get('/api/queue-health').set(as(tokens.engineer));
    expect(response.status).toBe(403);
  });
});
