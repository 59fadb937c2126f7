import { randomUUID } from 'node:crypto';
import { createApp } from '@crackpoint/api';
import { defaultScenario } from '@crackpoint/sim-core';
import { createSweepWorker, jobIdFor, type SweepWorker } from '@crackpoint/worker';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  createTestContext,
  createWorkspace,
  deleteWorkspace,
  tokensFor,
  type Role,
  type TestContext,
  type TestWorkspace,
} from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let rival: TestWorkspace;
let tokens: Record<Role, string>;
let rivalTokens: Record<Role, string>;
let scenarioId: string;
let worker: SweepWorker;

// Small chunks so a 3 × 3 sweep runs as three chunks and the last-chunk bookkeeping is exercised.
const CHUNK_SIZE = 4;

beforeAll(async () => {
  ctx = createTestContext({ SWEEP_CHUNK_SIZE: String(CHUNK_SIZE), SWEEP_MAX_POINTS: '1000' });
  shop = await createWorkspace(ctx.knex, 'sweeps');
  rival = await createWorkspace(ctx.knex, 'sweeps-rival');
  tokens = await tokensFor(ctx.app, shop);
  rivalTokens = await tokensFor(ctx.app, rival);
  // A builder's scenario: builders sweep only their own (route-def.ts, OWN_ONLY); engineers sweep any.
  const created = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.builder)).send({ name: 'Sweep base' });
  scenarioId = created.body.scenario.id;
  worker = createSweepWorker({ knex: ctx.knex, redis: ctx.config.redisUrl, queueName: ctx.queueName, concurrency: 2 });
});

afterAll(async () => {
  await worker.close();
  await deleteWorkspace(ctx.knex, shop);
  await deleteWorkspace(ctx.knex, rival);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const countSweeps = async (forScenario: string) =>
  Number((await ctx.knex('sweeps').where({ scenario_id: forScenario }).count<{ n: string }[]>('* as n'))[0]?.n);

const SEAT_FORCES_N = [100, 129, 160];
const RATIOS = [1.2, 1.5, 1.8];
const axes3x3 = [
  { path: 'springs.0.seatForceN', values: SEAT_FORCES_N },
  { path: 'exhaust.ratio', values: RATIOS },
];

const circle = (diameterM: number) => (Math.PI * diameterM * diameterM) / 4;
/** MODEL.md §3 by hand for the default arrangement (bottom port on boost, vented): F0 / (r·A_v + A_p − A_s). */
function handCrackBoostPa(seatForceN: number, ratio: number): number {
  const w = defaultScenario().wastegate;
  return seatForceN / (ratio * circle(w.valveDiameterM) + circle(w.actuatorDiameterM) - circle(w.shaftDiameterM));
}

async function waitForState(sweepId: string, states: string[], timeoutMs = 20_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}`).set(bearer(tokens.analyst));
    if (states.includes(response.body.sweep?.state)) return response.body.sweep;
    if (Date.now() > deadline) throw new Error(`sweep ${sweepId} stayed ${response.body.sweep?.state}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

describe('POST /api/sweeps validation', () => {
  it('returns 400 naming axes.0.values for an axis with zero values, and writes no sweep', async () => {
    const before = await countSweeps(scenarioId);
    const response = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId, level: 'static', axes: [{ path: 'exhaust.ratio', values: [] }] });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('axes.0.values');
    expect(await countSweeps(scenarioId)).toBe(before);
  });

  it('returns 400 naming axes.1.path for a path that is not a number of the scenario', async () => {
    const response = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId, level: 'static', axes: [axes3x3[0], { path: 'exhaust.colour', values: [1] }] });
    expect(response.status).toBe(400);
    expect(response.body.error.fields['axes.1.path']).toMatch(/not a number/);
  });

  it('returns 400 naming the value that makes the scenario invalid', async () => {
    const response = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId, level: 'static', axes: [{ path: 'wastegate.valveDiameterM', values: [0.04, -0.01] }] });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('axes.0.values.1');
  });

  it('returns 400 for no axes and for more than three', async () => {
    const none = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId, level: 'static', axes: [] });
    expect(none.status).toBe(400);
    expect(none.body.error.fields).toHaveProperty('axes');
    const axis = (path: string) => ({ path, values: [1] });
    const four = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId, axes: [axis('exhaust.ratio'), axis('springs.0.seatForceN'), axis('springs.0.rateNPerM'), axis('wastegate.maxLiftM')] });
    expect(four.status).toBe(400);
    expect(four.body.error.fields).toHaveProperty('axes');
  });

  it('returns 400 when the sweep has more points than allowed', async () => {
    const range = (from: number, to: number) => ({ from, to, count: 40 });
    const response = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId, axes: [{ path: 'exhaust.ratio', range: range(1, 2) }, { path: 'springs.0.seatForceN', range: range(80, 200) }] });
    expect(response.status).toBe(400);
    expect(response.body.error.fields.axes).toMatch(/1600 points.*at most 1000/);
  });

  it('returns 400 naming level for a level that does not exist', async () => {
    const response = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId, level: 'quasi-static', axes: axes3x3 });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('level');
  });

  it('returns 403 to an analyst and writes no sweep', async () => {
    const before = await countSweeps(scenarioId);
    const response = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.analyst)).send({ scenarioId, level: 'static', axes: axes3x3 });
    expect(response.status).toBe(403);
    expect(await countSweeps(scenarioId)).toBe(before);
  });

  it("returns 404 for another workspace's scenario", async () => {
    const response = await request(ctx.app).post('/api/sweeps').set(bearer(rivalTokens.engineer)).send({ scenarioId, level: 'static', axes: axes3x3 });
    expect(response.status).toBe(404);
  });
});

describe('a 3 × 3 static sweep, end to end with a real worker', () => {
  let sweepId: string;

  it('is created queued with its snapshot, axes and chunk rows', async () => {
    const response = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.builder)).send({ scenarioId, level: 'static', axes: axes3x3 });
    expect(response.status).toBe(201);
    const sweep = response.body.sweep;
    sweepId = sweep.id;
    expect(sweep).toMatchObject({ scenarioId, level: 'static', pointCount: 9, axes: axes3x3 });
    expect(['queued', 'running', 'done']).toContain(sweep.state);

    const row = await ctx.knex('sweeps').where({ id: sweepId }).first();
    expect(row).toMatchObject({ workspace_id: shop.id, created_by: shop.members.builder.id, point_count: 9, chunk_size: CHUNK_SIZE });
    expect(row.scenario_snapshot).toEqual(defaultScenario());
    expect(row.axes).toEqual(axes3x3);
    const chunks = await ctx.knex('sweep_chunks').where({ sweep_id: sweepId }).orderBy('chunk_index');
    expect(chunks.map((c) => [c.chunk_index, c.first_index, c.point_count])).toEqual([
      [0, 0, 4],
      [1, 4, 4],
      [2, 8, 1],
    ]);
  });

  it('reaches done with exactly 9 point rows and counters to match', async () => {
    const sweep = await waitForState(sweepId, ['done', 'failed']);
    expect(sweep).toMatchObject({ state: 'done', pointCount: 9, pointsDone: 9, pointsFailed: 0 });
    expect(Date.parse(sweep.finishedAt)).toBeGreaterThanOrEqual(Date.parse(sweep.startedAt));
    const points = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).orderBy('point_index');
    expect(points.map((p) => p.point_index)).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8]);
    expect(points.every((p) => p.status === 'ok' && p.error === null)).toBe(true);
    expect(await ctx.knex('sweep_chunks').where({ sweep_id: sweepId }).whereNot({ state: 'done' })).toEqual([]);
  });

  it('gives a 3 × 3 surface with z[iy][ix] at x = seat force and y = ratio, as worked by hand', async () => {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=crackBoostPa&x=0&y=1`).set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    const surface = response.body;
    expect(surface.metric).toBe('crackBoostPa');
    expect(surface.x).toEqual(axes3x3[0]);
    expect(surface.y).toEqual(axes3x3[1]);
    expect(surface.z).toHaveLength(3);
    RATIOS.forEach((ratio, iy) => {
      expect(surface.z[iy]).toHaveLength(3);
      SEAT_FORCES_N.forEach((seat, ix) => {
        expect(typeof surface.z[iy][ix]).toBe('number');
        expect(surface.z[iy][ix]).toBeCloseTo(handCrackBoostPa(seat, ratio), 6);
      });
    });
  });

  it('swaps the layout when x and y are swapped, and gives full-open boost above crack', async () => {
    const crack = (await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?x=1&y=0`).set(bearer(tokens.analyst))).body;
    expect(crack.x.path).toBe('exhaust.ratio');
    expect(crack.z[2][0]).toBeCloseTo(handCrackBoostPa(SEAT_FORCES_N[2]!, RATIOS[0]!), 6);
    const full = (await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=fullOpenBoostPa&x=1&y=0`).set(bearer(tokens.analyst))).body;
    expect(full.metric).toBe('fullOpenBoostPa');
    expect(full.z[1][1]).toBeGreaterThan(crack.z[1][1]);
  });

  it('returns 400 for a surface on one axis twice or on an axis the sweep lacks', async () => {
    const same = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?x=1&y=1`).set(bearer(tokens.analyst));
    expect(same.status).toBe(400);
    expect(same.body.error.fields).toHaveProperty('y');
    const missing = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?x=0&y=2`).set(bearer(tokens.analyst));
    expect(missing.status).toBe(400);
    const metric = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=peak`).set(bearer(tokens.analyst));
    expect(metric.status).toBe(400);
    expect(metric.body.error.fields).toHaveProperty('metric');
    const dynamicOnly = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=settledBoostPa`).set(bearer(tokens.analyst));
    expect(dynamicOnly.status).toBe(400);
    expect(dynamicOnly.body.error.fields.metric).toMatch(/dynamic level/);
  });

  it('is listed for its scenario and hidden from another workspace', async () => {
    const list = await request(ctx.app).get(`/api/sweeps?scenarioId=${scenarioId}`).set(bearer(tokens.analyst));
    expect(list.status).toBe(200);
    expect(list.body.items.map((s: { id: string }) => s.id)).toContain(sweepId);
    expect(list.body.total).toBe(await countSweeps(scenarioId));

    const foreign = await request(ctx.app).get(`/api/sweeps/${sweepId}`).set(bearer(rivalTokens.admin));
    expect(foreign.status).toBe(404);
    const foreignSurface = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface`).set(bearer(rivalTokens.admin));
    expect(foreignSurface.status).toBe(404);
    const foreignList = await request(ctx.app).get(`/api/sweeps?scenarioId=${scenarioId}`).set(bearer(rivalTokens.admin));
    expect(foreignList.body).toEqual({ items: [], total: 0 });
  });
});

describe('GET /api/sweeps/:id scenarioSnapshot', () => {
  it('gives the scenario the points were computed from, not the scenario as saved since, and lists leave it out', async () => {
    const base = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'Snapshot base' });
    const own = base.body.scenario;
    const created = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId: own.id, axes: [axes3x3[1]] });
    expect(created.status).toBe(201);
    expect(created.body.sweep).not.toHaveProperty('scenarioSnapshot');

    const edited = { ...own.data, exhaust: { ...own.data.exhaust, ratio: 2.4 } };
    const saved = await request(ctx.app).patch(`/api/scenarios/${own.id}`).set(bearer(tokens.engineer)).send({ data: edited, version: own.version });
    expect(saved.status).toBe(200);

    const shown = await request(ctx.app).get(`/api/sweeps/${created.body.sweep.id}`).set(bearer(tokens.analyst));
    expect(shown.status).toBe(200);
    expect(shown.body.sweep.scenarioSnapshot).toEqual(defaultScenario());
    expect(shown.body.sweep.scenarioSnapshot.exhaust.ratio).not.toBe(2.4);

    const list = await request(ctx.app).get(`/api/sweeps?scenarioId=${own.id}`).set(bearer(tokens.analyst));
    expect(list.body.items).toHaveLength(1);
    expect(list.body.items[0]).not.toHaveProperty('scenarioSnapshot');
  });
});

describe('a three-axis sweep', () => {
  it('cuts the surface at the chosen value of the third axis', async () => {
    const axes = [...axes3x3, { path: 'springs.0.rateNPerM', values: [1000, 5000] }];
    const created = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId, axes });
    expect(created.status).toBe(201);
    await waitForState(created.body.sweep.id, ['done']);
    const url = `/api/sweeps/${created.body.sweep.id}/surface?metric=fullOpenBoostPa&x=0&y=1`;
    const soft = (await request(ctx.app).get(`${url}&slice=0`).set(bearer(tokens.analyst))).body;
    const stiff = (await request(ctx.app).get(`${url}&slice=1`).set(bearer(tokens.analyst))).body;
    expect(stiff.z[0][0]).toBeGreaterThan(soft.z[0][0]);
    // Crack boost does not depend on the spring rate, so both cuts agree there.
    const crackSoft = (await request(ctx.app).get(`/api/sweeps/${created.body.sweep.id}/surface?slice=0`).set(bearer(tokens.analyst))).body;
    const crackStiff = (await request(ctx.app).get(`/api/sweeps/${created.body.sweep.id}/surface?slice=1`).set(bearer(tokens.analyst))).body;
    expect(crackStiff.z).toEqual(crackSoft.z);
    const beyond = await request(ctx.app).get(`${url}&slice=2`).set(bearer(tokens.analyst));
    expect(beyond.status).toBe(400);
    expect(beyond.body.error.fields).toHaveProperty('slice');
  });
});

describe('when something goes wrong around the queue', () => {
  it('keeps the sweep queued in PostgreSQL when Redis refuses the jobs', async () => {
    const deadRedis = new Redis('redis://127.0.0.1:1', { enableOfflineQueue: false, maxRetriesPerRequest: 1, retryStrategy: () => null });
    deadRedis.on('error', () => undefined);
    const deadQueue = new Queue(`sweep-chunks-dead-${randomUUID()}`, { connection: deadRedis });
    deadQueue.on('error', () => undefined);
    try {
      const app = createApp({ knex: ctx.knex, queue: deadQueue, config: ctx.config });
      const response = await request(app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId, axes: axes3x3 });
      expect(response.status).toBe(201);
      expect(response.body.sweep.state).toBe('queued');
      const row = await ctx.knex('sweeps').where({ id: response.body.sweep.id }).first();
      expect(row.state).toBe('queued');
      expect(await ctx.knex('sweep_chunks').where({ sweep_id: row.id, state: 'queued' })).toHaveLength(3);
      const health = await request(app).get('/api/health');
      expect(health.status).toBe(503);
      expect(health.body).toMatchObject({ database: 'ok', queue: 'down' });
    } finally {
      await deadQueue.close().catch(() => undefined);
      deadRedis.disconnect();
    }
  });

  it('marks the sweep failed when one of its jobs cannot be processed', async () => {
    const created = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.engineer)).send({ scenarioId, axes: [axes3x3[0]] });
    expect(created.status).toBe(201);
    const sweepId = created.body.sweep.id;
    await waitForState(sweepId, ['done']);
    // Put it back to running and send a job for a chunk that does not exist: unrecoverable, not retried.
    await ctx.knex('sweeps').where({ id: sweepId }).update({ state: 'running', finished_at: null });
    await ctx.queue.add('chunk', { sweepId, chunkIndex: 99 }, { jobId: jobIdFor({ sweepId, chunkIndex: 99 }), attempts: 3 });
    const sweep = await waitForState(sweepId, ['failed']);
    expect(sweep.finishedAt).not.toBeNull();
    const job = await ctx.queue.getJob(jobIdFor({ sweepId, chunkIndex: 99 }));
    expect(job?.attemptsMade).toBe(1);
  });
});
