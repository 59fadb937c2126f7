import { defaultScenario, evaluateStaticPoint, toSI, units } from '@crackpoint/sim-core';
import { createSweepWorker, type SweepWorker } from '@crackpoint/worker';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
let scenarioId: string;
let worker: SweepWorker;

beforeAll(async () => {
  // Three points a chunk, so a four-point dynamic sweep runs as two chunks on two threads.
  ctx = createTestContext({ SWEEP_DYNAMIC_CHUNK_SIZE: '3' });
  shop = await createWorkspace(ctx.knex, 'sweep-levels');
  tokens = await tokensFor(ctx.app, shop);
  // A builder's scenario: builders sweep only their own (route-def.ts, OWN_ONLY).
  const created = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.builder)).send({ name: 'Levels base' });
  scenarioId = created.body.scenario.id;
  worker = createSweepWorker({ knex: ctx.knex, redis: ctx.config.redisUrl, queueName: ctx.queueName, concurrency: 2 });
});

afterAll(async () => {
  await worker.close();
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const SEAT_FORCES_N = [100, 160];
const RATIOS = [1.2, 1.8];
const axes2x2 = [
  { path: 'springs.0.seatForceN', values: SEAT_FORCES_N },
  { path: 'exhaust.ratio', values: RATIOS },
];
/** MODEL.md §7: a settled pull's boost matches the static balance at its settled lift within 0.01 psi. */
const SETTLED_TOLERANCE_PA = toSI(units.psi, 0.01);

async function waitForState(sweepId: string, states: string[], timeoutMs = 25_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}`).set(bearer(tokens.analyst));
    if (states.includes(response.body.sweep?.state)) return response.body.sweep;
    if (Date.now() > deadline) throw new Error(`sweep ${sweepId} stayed ${response.body.sweep?.state}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

async function runSweep(level: string, axes: unknown) {
  const created = await request(ctx.app).post('/api/sweeps').set(bearer(tokens.builder)).send({ scenarioId, level, axes });
  expect(created.status, JSON.stringify(created.body)).toBe(201);
  expect(created.body.sweep.level).toBe(level);
  const sweep = await waitForState(created.body.sweep.id, ['done', 'failed']);
  const points = await ctx.knex('sweep_points').where({ sweep_id: sweep.id }).orderBy('point_index');
  return { sweep, points };
}

describe('a 2 × 2 dynamic sweep', () => {
  let sweepId: string;

  it('runs a whole pull per point in small chunks and stores its metrics in typed columns', async () => {
    const { sweep, points } = await runSweep('dynamic', axes2x2);
    sweepId = sweep.id;
    expect(sweep).toMatchObject({ state: 'done', pointCount: 4, pointsDone: 4, pointsFailed: 0 });
    expect(await ctx.knex('sweep_chunks').where({ sweep_id: sweepId }).orderBy('chunk_index').pluck('point_count')).toEqual([3, 1]);
    expect(points.map((p) => p.point_index)).toEqual([0, 1, 2, 3]);
    for (const point of points) {
      expect(point).toMatchObject({ status: 'ok', dynamic_status: 'ok', error: null, crack_boost_pa: null, full_open_boost_pa: null });
      expect(point.peak_boost_pa).toBeGreaterThanOrEqual(point.settled_boost_pa);
      expect(point.dynamic_crack_boost_pa).toBeGreaterThan(0);
      expect(typeof point.not_settled).toBe('boolean');
      expect(typeof point.over_boost_limit).toBe('boolean');
      expect(point.result.dynamic.outcome).toBe('converged');
      if (point.not_settled === false) {
        expect(Math.abs(point.settled_boost_pa - point.static_boost_at_settled_lift_pa)).toBeLessThan(SETTLED_TOLERANCE_PA);
      }
    }
    // A stiffer seat holds the valve shut to a higher boost (same ratio: points 0 and 2).
    expect(points[2]!.settled_boost_pa).toBeGreaterThan(points[0]!.settled_boost_pa);
  });

  it('gives a surface of settled boost over the two axes, z[iy][ix]', async () => {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=settledBoostPa&x=0&y=1`).set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    const points = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).orderBy('point_index');
    // Index = seat index · 2 + ratio index (first axis slowest).
    expect(response.body.z).toEqual([
      [points[0]!.settled_boost_pa, points[2]!.settled_boost_pa],
      [points[1]!.settled_boost_pa, points[3]!.settled_boost_pa],
    ]);
    const flags = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=notSettled`).set(bearer(tokens.analyst));
    expect(flags.status).toBe(200);
    expect(flags.body.z.flat().every((v: number) => v === 0 || v === 1)).toBe(true);
  });

  it('refuses a static metric on a dynamic sweep, naming metric', async () => {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface?metric=fullOpenBoostPa`).set(bearer(tokens.analyst));
    expect(response.status).toBe(400);
    expect(response.body.error.fields.metric).toMatch(/static level/);
  });
});

describe('a sweep at both levels', () => {
  it('stores the static balance and the pull of every point side by side', async () => {
    const { sweep, points } = await runSweep('both', [axes2x2[1]]);
    expect(sweep).toMatchObject({ state: 'done', pointsDone: 2, pointsFailed: 0 });
    RATIOS.forEach((ratio, i) => {
      const point = points[i]!;
      const scenario = defaultScenario();
      const expected = evaluateStaticPoint({ ...scenario, exhaust: { ...scenario.exhaust, ratio } });
      expect(point.crack_boost_pa).toBeCloseTo(expected.crackBoostPa!, 6);
      expect(point.full_open_boost_pa).toBeCloseTo(expected.fullOpenBoostPa!, 6);
      expect(point.dynamic_status).toBe('ok');
      expect(point.settled_boost_pa).toBeGreaterThan(0);
    });
    const crack = await request(ctx.app).get(`/api/sweeps/${sweep.id}/surface?metric=crackBoostPa&x=0&y=0`).set(bearer(tokens.analyst));
    // One axis: x and y cannot both be it.
    expect(crack.status).toBe(400);
  });
});

describe('a point the model cannot finish', () => {
  it('is recorded as failed with its reason while the rest complete', async () => {
    const { sweep, points } = await runSweep('dynamic', [{ path: 'solver.maxSteps', values: [100, 200_000] }]);
    expect(sweep).toMatchObject({ state: 'done', pointsDone: 2, pointsFailed: 1 });
    expect(points[0]).toMatchObject({ status: 'failed', dynamic_status: 'failed' });
    expect(points[0]!.error).toMatch(/max-steps/);
    expect(points[1]).toMatchObject({ status: 'ok', error: null });
  });
});
