import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { coordinatesOf, defaultScenario, fromSI, units } from '@crackpoint/sim-core';
import { createSweepWorker, type SweepWorker } from '@crackpoint/worker';
import { parse as parseCsv } from 'csv-parse/sync';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
let scenarioId: string;
let worker: SweepWorker;
let server: Server;
let baseUrl: string;

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

beforeAll(async () => {
  ctx = createTestContext({ SWEEP_DYNAMIC_CHUNK_SIZE: '2' });
  shop = await createWorkspace(ctx.knex, 'sweep-results');
  tokens = await tokensFor(ctx.app, shop);
  // A builder's scenario: builders sweep only their own (route-def.ts, OWN_ONLY).
  const created = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.builder)).send({ name: 'Harrow Lane "street" build, rev 2' });
  scenarioId = created.body.scenario.id;
  worker = createSweepWorker({ knex: ctx.knex, redis: ctx.config.redisUrl, queueName: ctx.queueName, concurrency: 2 });
  // Streams are read as a browser reads them, piece by piece, so the app listens on a port of its own.
  server = ctx.app.listen(0, '127.0.0.1');
  await new Promise((resolve) => server.once('listening', resolve));
  baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});

afterAll(async () => {
  server.closeAllConnections();
  await new Promise((resolve) => server.close(resolve));
  await worker.close();
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

// ---------------------------------------------------------------------------------------------------
// Sweeps written straight to the database, with metric values chosen so every sort has ties and gaps.

type Level = 'static' | 'dynamic' | 'both';
interface Axis {
  path: string;
  values: number[];
}

const NUMBER_COLUMNS = [
  'crack_boost_pa',
  'full_open_boost_pa',
  'dynamic_crack_boost_pa',
  'peak_boost_pa',
  'settled_boost_pa',
  'static_boost_at_settled_lift_pa',
  'overshoot_pa',
  'time_to_90_percent_s',
  'creep_pa',
  'peak_drive_pa',
  'drive_ratio_seen',
  'max_lift_fraction',
  'gas_used_per_pull_kg',
  'pulls_per_supply',
  'boost_swing_pa',
  'armed_gas_kg_per_s',
  'session_gas_kg',
] as const;
const FLAG_COLUMNS = [
  'over_boost_limit',
  'held_open_by_drive',
  'supply_below_setpoint',
  'past_zero_flow_line',
  'not_settled',
  'hunting',
  'port_lag',
  'target_unreachable',
] as const;

/** A value for column c of point i: a few distinct values (so ties), and null on some points. */
function valueOf(c: number, i: number): number | null {
  if ((i + c) % 5 === 0) return null;
  return ((i * (c + 3) * 7919) % 11) * 1000 + c;
}

async function writeSweep(options: {
  axes: Axis[];
  level?: Level;
  state?: string;
  points?: 'all' | 'none';
  error?: (index: number) => string | null;
}): Promise<string> {
  const level = options.level ?? 'both';
  const pointCount = options.axes.reduce((n, axis) => n * axis.values.length, 1);
  const state = options.state ?? 'done';
  const withPoints = (options.points ?? 'all') === 'all';
  const [sweep] = await ctx
    .knex('sweeps')
    .insert({
      workspace_id: shop.id,
      scenario_id: scenarioId,
      created_by: shop.members.engineer.id,
      scenario_snapshot: JSON.stringify(defaultScenario()),
      level,
      axes: JSON.stringify(options.axes),
      state,
      point_count: pointCount,
      points_done: withPoints ? pointCount : 0,
      points_failed: withPoints ? Math.ceil(pointCount / 7) : 0,
      chunk_size: 250,
      started_at: state === 'queued' ? null : ctx.knex.fn.now(),
      finished_at: ['done', 'failed', 'cancelled'].includes(state) ? ctx.knex.fn.now() : null,
    })
    .returning<{ id: string }[]>('id');
  if (!sweep) throw new Error('sweep not written');
  if (!withPoints) return sweep.id;
  const rows = Array.from({ length: pointCount }, (_, i) => {
    const coords = coordinatesOf(options.axes, i);
    const failed = i % 7 === 0;
    const row: Record<string, unknown> = {
      sweep_id: sweep.id,
      point_index: i,
      axis0: options.axes[0]?.values[coords[0] ?? 0] ?? null,
      axis1: options.axes[1] ? options.axes[1].values[coords[1] ?? 0] : null,
      axis2: options.axes[2] ? options.axes[2].values[coords[2] ?? 0] : null,
      status: failed ? 'failed' : 'ok',
      dynamic_status: level === 'static' ? null : failed ? 'failed' : 'ok',
      error: options.error?.(i) ?? (failed ? 'the pull stopped early (max-steps)' : null),
    };
    NUMBER_COLUMNS.forEach((column, c) => {
      row[column] = valueOf(c, i);
    });
    FLAG_COLUMNS.forEach((column, c) => {
      row[column] = level === 'static' ? null : (i + c) % 3 === 0;
    });
    return row;
  });
  await ctx.knex.batchInsert('sweep_points', rows, 1000);
  return sweep.id;
}

// ---------------------------------------------------------------------------------------------------
// Server-sent events, read as the web app reads them: fetch with the Bearer header.

interface SseEvent {
  id: number | null;
  type: string;
  data: Record<string, unknown>;
}

interface OpenStream {
  status: number;
  events: SseEvent[];
  comments: string[];
  /** Resolves when the server ends the stream. */
  ended: Promise<void>;
  /** Waits until an event matches (or the stream ends without one). */
  until(match: (event: SseEvent) => boolean, timeoutMs?: number): Promise<SseEvent>;
  close(): void;
}

async function openEvents(sweepId: string, token: string): Promise<OpenStream> {
  const controller = new AbortController();
  const response = await fetch(`${baseUrl}/api/sweeps/${sweepId}/events`, { headers: bearer(token), signal: controller.signal });
  const events: SseEvent[] = [];
  const comments: string[] = [];
  const waiters: (() => void)[] = [];
  const wake = () => waiters.splice(0).forEach((w) => w());
  let done = false;
  const ended = (async () => {
    if (!response.body) return;
    const reader = response.body.pipeThrough(new TextDecoderStream()).getReader();
    let buffer = '';
    try {
      for (;;) {
        const { value, done: finished } = await reader.read();
        if (finished) break;
        buffer += value;
        let cut: number;
        while ((cut = buffer.indexOf('\n\n')) >= 0) {
          const block = buffer.slice(0, cut);
          buffer = buffer.slice(cut + 2);
          let id: number | null = null;
          let type = 'message';
          let data = '';
          for (const line of block.split('\n')) {
            if (line.startsWith(':')) comments.push(line.slice(1).trim());
            else if (line.startsWith('id: ')) id = Number(line.slice(4));
            else if (line.startsWith('event: ')) type = line.slice(7);
            else if (line.startsWith('data: ')) data += line.slice(6);
          }
          if (data !== '') events.push({ id, type, data: JSON.parse(data) as Record<string, unknown> });
          wake();
        }
      }
    } catch (error) {
      if (!controller.signal.aborted) throw error;
    } finally {
      done = true;
      wake();
    }
  })();
  return {
    status: response.status,
    events,
    comments,
    ended,
    async until(match, timeoutMs = 15_000) {
      const deadline = Date.now() + timeoutMs;
      for (;;) {
        const found = events.find(match);
        if (found) return found;
        if (done) throw new Error(`the stream ended without the event; it sent ${JSON.stringify(events)}`);
        if (Date.now() > deadline) throw new Error(`no such event in ${timeoutMs} ms; got ${JSON.stringify(events)}`);
        await new Promise<void>((resolve) => {
          waiters.push(resolve);
          setTimeout(resolve, 200);
        });
      }
    },
    close: () => controller.abort(),
  };
}

async function waitForState(sweepId: string, states: string[], timeoutMs = 25_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}`).set(bearer(tokens.analyst));
    if (states.includes(response.body.sweep?.state)) return response.body.sweep;
    if (Date.now() > deadline) throw new Error(`sweep ${sweepId} stayed ${response.body.sweep?.state}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

describe('GET /api/sweeps/:id/events', () => {
  it('sends state and progress in order with ids, a recent rate and time left, and ends after done', async () => {
    const sweepId = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1.2, 1.4, 1.6, 1.8] }], state: 'queued', points: 'none' });
    const stream = await openEvents(sweepId, tokens.analyst);
    expect(stream.status).toBe(200);
    await stream.until((e) => e.type === 'progress');
    expect(stream.events.slice(0, 2)).toEqual([
      { id: 1, type: 'state', data: { state: 'queued', previous: null } },
      { id: 2, type: 'progress', data: { state: 'queued', pointCount: 4, pointsDone: 0, pointsFailed: 0, pointsPerSecond: null, secondsLeft: null } },
    ]);

    // What a worker does to the row, step by step.
    await ctx.knex('sweeps').where({ id: sweepId }).update({ state: 'running', started_at: ctx.knex.fn.now() });
    await stream.until((e) => e.type === 'state' && e.data.state === 'running');
    await ctx.knex('sweeps').where({ id: sweepId }).update({ points_done: 1 });
    await stream.until((e) => e.type === 'progress' && e.data.pointsDone === 1);
    await ctx.knex('sweeps').where({ id: sweepId }).update({ points_done: 3, points_failed: 1 });
    const three = await stream.until((e) => e.type === 'progress' && e.data.pointsDone === 3);
    expect(three.data.pointsPerSecond).toBeGreaterThan(0);
    expect(three.data.secondsLeft).toBeGreaterThan(0);
    await ctx.knex('sweeps').where({ id: sweepId }).update({ points_done: 4, state: 'done', finished_at: ctx.knex.fn.now() });
    await stream.ended;

    const ids = stream.events.map((e) => e.id);
    expect(ids).toEqual(ids.map((_, i) => i + 1));
    expect(stream.events.filter((e) => e.type === 'state').map((e) => [e.data.previous, e.data.state])).toEqual([
      [null, 'queued'],
      ['queued', 'running'],
      ['running', 'done'],
    ]);
    const progress = stream.events.filter((e) => e.type === 'progress').map((e) => e.data.pointsDone as number);
    expect(progress).toEqual([...progress].sort((a, b) => a - b));
    expect(stream.events.at(-1)).toMatchObject({ type: 'progress', data: { state: 'done', pointsDone: 4, pointsFailed: 1, secondsLeft: 0 } });
    // At most one progress event per reading: never two for the same count and state.
    const keys = stream.events.filter((e) => e.type === 'progress').map((e) => `${e.data.state}:${e.data.pointsDone}`);
    expect(new Set(keys).size).toBe(keys.length);
  });

  it('follows a sweep the worker runs until it is done', async () => {
    const created = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.builder))
      .send({ scenarioId, level: 'static', axes: [{ path: 'springs.0.seatForceN', values: [100, 120, 140] }] });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const stream = await openEvents(created.body.sweep.id, tokens.builder);
    await stream.ended;
    expect(stream.events.at(-1)).toMatchObject({ type: 'progress', data: { state: 'done', pointCount: 3, pointsDone: 3 } });
    expect(stream.events.filter((e) => e.type === 'state').at(-1)?.data.state).toBe('done');
  });

  it('ends the stream when the sweep is cancelled', async () => {
    const sweepId = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1.2, 1.6] }], state: 'running', points: 'none' });
    await ctx.knex('sweep_chunks').insert({ sweep_id: sweepId, chunk_index: 0, first_index: 0, point_count: 2, state: 'running' });
    const stream = await openEvents(sweepId, tokens.engineer);
    await stream.until((e) => e.type === 'progress');
    const cancelled = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(bearer(tokens.engineer)).send({});
    expect(cancelled.status).toBe(200);
    await stream.ended;
    expect(stream.events.at(-2)).toMatchObject({ type: 'state', data: { state: 'cancelled', previous: 'running' } });
    expect(stream.events.at(-1)).toMatchObject({ type: 'progress', data: { state: 'cancelled', secondsLeft: null } });
  });

  it('holds at most four streams per member and frees one when its client leaves', async () => {
    const sweepId = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1.2, 1.6] }], state: 'running', points: 'none' });
    const open = [];
    for (let i = 0; i < 4; i++) {
      const stream = await openEvents(sweepId, tokens.admin);
      expect(stream.status).toBe(200);
      await stream.until((e) => e.type === 'progress');
      open.push(stream);
    }
    const fifth = await request(ctx.app).get(`/api/sweeps/${sweepId}/events`).set(bearer(tokens.admin));
    expect(fifth.status).toBe(429);
    expect(fifth.body.error.code).toBe('too_many_streams');
    // Another member is not held to the admin's count.
    const other = await openEvents(sweepId, tokens.analyst);
    expect(other.status).toBe(200);
    other.close();

    open[0]?.close();
    const deadline = Date.now() + 5000;
    let again: OpenStream | undefined;
    while (!again && Date.now() < deadline) {
      const attempt = await openEvents(sweepId, tokens.admin);
      if (attempt.status === 200) again = attempt;
      else await new Promise((resolve) => setTimeout(resolve, 100));
    }
    expect(again?.status).toBe(200);
    again?.close();
    for (const stream of open) stream.close();
  });

  it('answers a missing sweep with 404 and no stream', async () => {
    const response = await request(ctx.app).get('/api/sweeps/00000000-0000-4000-8000-000000000000/events').set(bearer(tokens.analyst));
    expect(response.status).toBe(404);
    expect(response.body.error.code).toBe('not_found');
  });
});

// ---------------------------------------------------------------------------------------------------

const METRIC_SORTS: [string, string][] = [
  ['crackBoostPa', 'crack_boost_pa'],
  ['fullOpenBoostPa', 'full_open_boost_pa'],
  ['dynamicCrackBoostPa', 'dynamic_crack_boost_pa'],
  ['peakBoostPa', 'peak_boost_pa'],
  ['settledBoostPa', 'settled_boost_pa'],
  ['staticBoostAtSettledLiftPa', 'static_boost_at_settled_lift_pa'],
  ['overshootPa', 'overshoot_pa'],
  ['timeTo90PercentS', 'time_to_90_percent_s'],
  ['creepPa', 'creep_pa'],
  ['peakDrivePa', 'peak_drive_pa'],
  ['driveRatioSeen', 'drive_ratio_seen'],
  ['maxLiftFraction', 'max_lift_fraction'],
  ['gasUsedPerPullKg', 'gas_used_per_pull_kg'],
  ['pullsPerSupply', 'pulls_per_supply'],
  ['boostSwingPa', 'boost_swing_pa'],
  ['armedGasKgPerS', 'armed_gas_kg_per_s'],
  ['sessionGasKg', 'session_gas_kg'],
  ['overBoostLimit', 'over_boost_limit'],
  ['heldOpenByDrive', 'held_open_by_drive'],
  ['supplyBelowSetpoint', 'supply_below_setpoint'],
  ['pastZeroFlowLine', 'past_zero_flow_line'],
  ['notSettled', 'not_settled'],
  ['hunting', 'hunting'],
  ['portLag', 'port_lag'],
  ['targetUnreachable', 'target_unreachable'],
];

const AXES_3: Axis[] = [
  { path: 'springs.0.seatForceN', values: [160, 100, 130] },
  { path: 'supply.regulatorSetpointPa', values: [60_000, 80_000, 70_000, 90_000] },
  { path: 'exhaust.ratio', values: [1.2, 1.8] },
];

describe('GET /api/sweeps/:id/points', () => {
  let sweepId: string;
  let stored: Record<string, unknown>[];

  beforeAll(async () => {
    sweepId = await writeSweep({ axes: AXES_3 });
    stored = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).orderBy('point_index');
  });

  async function allPages(query: Record<string, string | number>, limit = 7) {
    const indices: number[] = [];
    let total = -1;
    for (let offset = 0; ; offset += limit) {
      const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/points`).query({ ...query, offset, limit }).set(bearer(tokens.analyst));
      expect(response.status, JSON.stringify(response.body)).toBe(200);
      total = response.body.total;
      indices.push(...response.body.items.map((item: { index: number }) => item.index));
      if (response.body.items.length < limit) break;
    }
    return { indices, total };
  }

  /** Missing values last either way; ties by index. */
  function expectedOrder(column: string, order: 'asc' | 'desc', rows = stored): number[] {
    const key = (row: Record<string, unknown>) => {
      const v = row[column];
      return v === null || v === undefined ? null : Number(v);
    };
    return [...rows]
      .sort((a, b) => {
        const ka = key(a);
        const kb = key(b);
        if (ka === null || kb === null) return ka === kb ? Number(a.point_index) - Number(b.point_index) : ka === null ? 1 : -1;
        return (order === 'asc' ? ka - kb : kb - ka) || Number(a.point_index) - Number(b.point_index);
      })
      .map((row) => Number(row.point_index));
  }

  it('gives one page with coordinates by axis path, status, error and SI metrics', async () => {
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/points`).query({ limit: 3, offset: 7 }).set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    expect(response.body).toMatchObject({ total: 24, offset: 7, limit: 3, sort: 'index', order: 'asc' });
    const [first] = response.body.items;
    expect(first).toEqual({
      index: 7,
      coordinates: { 'springs.0.seatForceN': 160, 'supply.regulatorSetpointPa': 90_000, 'exhaust.ratio': 1.8 },
      status: 'failed',
      dynamicStatus: 'failed',
      error: 'the pull stopped early (max-steps)',
      metrics: expect.objectContaining({ crackBoostPa: stored[7]!.crack_boost_pa, settledBoostPa: stored[7]!.settled_boost_pa, notSettled: stored[7]!.not_settled }),
    });
    expect(Object.keys(first.metrics)).toHaveLength(25);
  });

  it('pages through every point in index order, both ways', async () => {
    expect(await allPages({})).toEqual({ indices: stored.map((r) => Number(r.point_index)), total: 24 });
    expect((await allPages({ order: 'desc' })).indices).toEqual(stored.map((r) => Number(r.point_index)).reverse());
  });

  it('sorts by each axis value', async () => {
    for (const [a, column] of [[0, 'axis0'], [1, 'axis1'], [2, 'axis2']] as const) {
      for (const order of ['asc', 'desc'] as const) {
        expect((await allPages({ sort: `axis${a}`, order })).indices, `${column} ${order}`).toEqual(expectedOrder(column, order));
      }
    }
  });

  it('sorts by every stored metric, missing values last', async () => {
    for (const [sort, column] of METRIC_SORTS) {
      for (const order of ['asc', 'desc'] as const) {
        expect((await allPages({ sort, order }, 10)).indices, `${sort} ${order}`).toEqual(expectedOrder(column, order));
      }
    }
  });

  it('filters by status, counting only those', async () => {
    const failed = await allPages({ status: 'failed', sort: 'settledBoostPa', order: 'desc' });
    const failedRows = stored.filter((r) => r.status === 'failed');
    expect(failed).toEqual({ indices: expectedOrder('settled_boost_pa', 'desc', failedRows), total: failedRows.length });
    const both = await allPages({ status: 'ok,failed' });
    expect(both.total).toBe(24);
  });

  it('refuses bad queries with 400 naming the field', async () => {
    const staticSweep = await writeSweep({ axes: AXES_3.slice(0, 2), level: 'static' });
    const cases: [string, Record<string, string | number>, string][] = [
      [sweepId, { sort: 'boost' }, 'sort'],
      [sweepId, { sort: 'index; drop table sweeps' }, 'sort'],
      [sweepId, { order: 'up' }, 'order'],
      [sweepId, { limit: 0 }, 'limit'],
      [sweepId, { limit: 501 }, 'limit'],
      [sweepId, { offset: -1 }, 'offset'],
      [sweepId, { offset: 'many' }, 'offset'],
      [sweepId, { status: 'broken' }, 'status'],
      [staticSweep, { sort: 'axis2' }, 'sort'],
      [staticSweep, { sort: 'settledBoostPa' }, 'sort'],
    ];
    for (const [id, query, field] of cases) {
      const response = await request(ctx.app).get(`/api/sweeps/${id}/points`).query(query).set(bearer(tokens.analyst));
      expect(response.status, JSON.stringify(query)).toBe(400);
      expect(Object.keys(response.body.error.fields), JSON.stringify(query)).toContain(field);
    }
  });
});

// ---------------------------------------------------------------------------------------------------

describe('GET /api/sweeps/:id/points.csv', () => {
  it('streams every row of a sweep of several pages, in index order, in the units asked for', async () => {
    // 4,800 points: more than two of the export's pages.
    const axes: Axis[] = [
      { path: 'springs.0.seatForceN', values: Array.from({ length: 40 }, (_, i) => 100 + i * 2.5) },
      { path: 'supply.regulatorSetpointPa', values: Array.from({ length: 60 }, (_, i) => 50_000 + i * 1000) },
      { path: 'exhaust.ratio', values: [1.2, 1.8] },
    ];
    const sweepId = await writeSweep({ axes, level: 'static' });
    const response = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).query({ units: 'us' }).set(bearer(tokens.analyst)).buffer(true);
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toMatch(/^text\/csv/);
    expect(response.headers['content-disposition']).toMatch(
      new RegExp(`^attachment; filename="?harrow-lane-street-build-rev-2-sweep-\\d{4}-\\d{2}-\\d{2}-${sweepId.slice(0, 8)}\\.csv"?$`),
    );
    const text = response.text;
    expect(text.endsWith('\r\n')).toBe(true);
    const rows = parseCsv(text) as string[][];
    expect(rows[0]).toEqual([
      'index',
      'springs.0.seatForceN (lbf)',
      'supply.regulatorSetpointPa (psi)',
      'exhaust.ratio',
      'status',
      'crack boost (psi)',
      'full-open boost (psi)',
      'error',
    ]);
    expect(rows).toHaveLength(1 + 4800);
    expect(rows.slice(1).map((r) => Number(r[0]))).toEqual(Array.from({ length: 4800 }, (_, i) => i));
    const stored = await ctx.knex('sweep_points').where({ sweep_id: sweepId, point_index: 4321 }).first();
    const row = rows[1 + 4321]!;
    expect(Number(row[1])).toBeCloseTo(fromSI(units.lbf, stored.axis0), 6);
    expect(Number(row[2])).toBeCloseTo(fromSI(units.psi, stored.axis1), 6);
    expect(Number(row[3])).toBe(stored.axis2);
    expect(row[4]).toBe(stored.status);
    expect(row[5]).toBe(stored.crack_boost_pa === null ? '' : String(Number(fromSI(units.psi, stored.crack_boost_pa).toPrecision(10))));
  });

  it('writes SI and metric headings, quotes text by RFC 4180 and keeps formulas as text', async () => {
    const errors: Record<number, string> = { 0: 'pressure "spiked", then\nfell', 1: '=HYPERLINK("x")', 3: 'plain' };
    const sweepId = await writeSweep({ axes: [{ path: 'supply.regulatorSetpointPa', values: [60_000, 70_000, 80_000, 90_000] }], level: 'dynamic', error: (i) => errors[i] ?? null });
    const si = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).set(bearer(tokens.analyst)).buffer(true);
    expect(si.status).toBe(200);
    const lines = si.text.split('\r\n');
    expect(lines[0]).toBe(
      'index,supply.regulatorSetpointPa (Pa),status,dynamic status,crack boost in the pull (Pa),peak boost (Pa),settled boost (Pa),' +
        'static boost at settled lift (Pa),overshoot (Pa),time to 90 % boost (s),creep (Pa),peak drive pressure (Pa),drive-to-boost ratio seen,' +
        'maximum lift fraction,gas used per pull (kg),pulls per bottle or tank,boost swing after the crack (Pa),gas passed while armed (kg/s),' +
        'gas for the planned session (kg),over boost limit,held open by drive pressure,supply below setpoint,past zero-flow line,not settled,' +
        'boost hunts,port lag,target out of reach,error',
    );
    expect(si.text).toContain(',"pressure ""spiked"", then\nfell"\r\n');
    const rows = parseCsv(si.text) as string[][];
    expect(rows).toHaveLength(5);
    expect(rows[1]!.at(-1)).toBe('pressure "spiked", then\nfell');
    expect(rows[2]!.at(-1)).toBe(`'=HYPERLINK("x")`);
    expect(rows[4]!.at(-1)).toBe('plain');
    expect(rows[1]![1]).toBe('60000');
    expect(['true', 'false']).toContain(rows[2]![19]);

    const metric = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).query({ units: 'metric' }).set(bearer(tokens.analyst)).buffer(true);
    const metricRows = parseCsv(metric.text) as string[][];
    expect(metricRows[0]!.slice(0, 5)).toEqual(['index', 'supply.regulatorSetpointPa (kPa)', 'status', 'dynamic status', 'crack boost in the pull (kPa)']);
    expect(metricRows[0]).toContain('gas used per pull (g)');
    expect(metricRows[0]).toContain('gas passed while armed (g/s)');
    expect(metricRows[1]![1]).toBe('60');
  });

  it('keeps only the points whose metric lies in a range, in the table and the CSV, and names a half range', async () => {
    const sweepId = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1, 1.2, 1.4, 1.6, 1.8, 2, 2.2, 2.4] }], level: 'both' });
    const stored = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).orderBy('point_index');
    const values = stored.map((r) => r.settled_boost_pa as number | null).filter((v): v is number => v !== null).sort((a, b) => a - b);
    const [from, to] = [values[1]!, values[values.length - 2]!];
    const expected = stored
      .filter((r) => r.settled_boost_pa !== null && r.settled_boost_pa >= from && r.settled_boost_pa <= to)
      .map((r) => Number(r.point_index));
    expect(expected.length).toBeGreaterThan(0);
    expect(expected.length).toBeLessThan(stored.length);

    const list = await request(ctx.app).get(`/api/sweeps/${sweepId}/points`).query({ between: 'settledBoostPa', from, to, limit: 500 }).set(bearer(tokens.analyst));
    expect(list.status, JSON.stringify(list.body)).toBe(200);
    expect(list.body.total).toBe(expected.length);
    expect(list.body.items.map((p: { index: number }) => p.index)).toEqual(expected);

    const csv = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).query({ between: 'settledBoostPa', from, to }).set(bearer(tokens.analyst)).buffer(true);
    expect((parseCsv(csv.text) as string[][]).slice(1).map((r) => Number(r[0]))).toEqual(expected);

    const half = await request(ctx.app).get(`/api/sweeps/${sweepId}/points`).query({ between: 'settledBoostPa', from }).set(bearer(tokens.analyst));
    expect(half.status).toBe(400);
    expect(half.body.error.fields).toEqual({ to: 'is required with between: the highest value kept' });
    const flag = await request(ctx.app).get(`/api/sweeps/${sweepId}/points`).query({ between: 'notSettled', from: 0, to: 1 }).set(bearer(tokens.analyst));
    expect(flag.status).toBe(400);
    expect(Object.keys(flag.body.error.fields)).toEqual(['between']);
    const staticOnly = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1.2, 1.6] }], level: 'static' });
    const wrongLevel = await request(ctx.app).get(`/api/sweeps/${staticOnly}/points`).query({ between: 'settledBoostPa', from, to }).set(bearer(tokens.analyst));
    expect(wrongLevel.status).toBe(400);
    expect(wrongLevel.body.error.fields.between).toMatch(/result of the dynamic level/);
  });

  it('filters by status and refuses an unknown unit system naming units', async () => {
    const sweepId = await writeSweep({ axes: [{ path: 'exhaust.ratio', values: [1, 1.2, 1.4, 1.6, 1.8, 2, 2.2, 2.4] }], level: 'static' });
    const failed = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).query({ status: 'failed' }).set(bearer(tokens.analyst)).buffer(true);
    expect((parseCsv(failed.text) as string[][]).slice(1).map((r) => r[0])).toEqual(['0', '7']);
    const bad = await request(ctx.app).get(`/api/sweeps/${sweepId}/points.csv`).query({ units: 'imperial' }).set(bearer(tokens.analyst));
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields).toHaveProperty('units');
  });
});

// ---------------------------------------------------------------------------------------------------

describe('POST /api/sweeps/:id/points/:index/pull', () => {
  let sweepId: string;

  beforeAll(async () => {
    const created = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.builder))
      .send({ scenarioId, level: 'dynamic', axes: [{ path: 'springs.0.seatForceN', values: [110, 150] }, { path: 'exhaust.ratio', values: [1.3, 1.7] }] });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    sweepId = created.body.sweep.id;
    await waitForState(sweepId, ['done']);
  });

  it('recomputes a point from the sweep snapshot with the metrics the sweep stored, for one compute unit', async () => {
    const stored = await ctx.knex('sweep_points').where({ sweep_id: sweepId, point_index: 2 }).first();
    // The scenario changes after the sweep ran; the point is still the sweep's own.
    await ctx.knex('scenarios').where({ id: scenarioId }).update({ data: JSON.stringify({ ...defaultScenario(), exhaust: { ...defaultScenario().exhaust, ratio: 1.95 } }) });
    const response = await request(ctx.app).post(`/api/sweeps/${sweepId}/points/2/pull`).set(bearer(tokens.builder)).send({});
    expect(response.status, JSON.stringify(response.body).slice(0, 300)).toBe(200);
    expect(response.body).toMatchObject({ scenarioId, scenarioVersion: null, sweepId, pointIndex: 2, coordinates: { 'springs.0.seatForceN': 150, 'exhaust.ratio': 1.3 } });
    const metrics = response.body.pull.metrics;
    expect(metrics.settledBoostPa).toBe(stored.settled_boost_pa);
    expect(metrics.peakBoostPa).toBe(stored.peak_boost_pa);
    expect(metrics.crackBoostPa).toBe(stored.dynamic_crack_boost_pa);
    expect(metrics.overshootPa).toBe(stored.overshoot_pa);
    expect(response.body.pull.series.boostPa.length).toBeGreaterThan(10);
    const charged = await ctx.knex('usage_ledger').where({ sweep_id: sweepId, kind: 'pull' });
    expect(charged).toHaveLength(1);
    expect(charged[0]!.user_id).toBe(shop.members.builder.id);
    expect(Number(charged[0]!.compute_units)).toBe(1);
  });

  it('answers an index outside the sweep with 404 and one that is not a number with 400, naming index, charging nothing', async () => {
    const before = await ctx.knex('usage_ledger').where({ workspace_id: shop.id }).count<{ count: string }[]>('* as count');
    const outside = await request(ctx.app).post(`/api/sweeps/${sweepId}/points/4/pull`).set(bearer(tokens.engineer)).send({});
    expect(outside.status).toBe(404);
    expect(outside.body.error.fields.index).toMatch(/below 4/);
    for (const bad of ['-1', '1.5', 'abc', '1e2']) {
      const response = await request(ctx.app).post(`/api/sweeps/${sweepId}/points/${bad}/pull`).set(bearer(tokens.engineer)).send({});
      expect(response.status, bad).toBe(400);
      expect(response.body.error.fields).toHaveProperty('index');
    }
    const after = await ctx.knex('usage_ledger').where({ workspace_id: shop.id }).count<{ count: string }[]>('* as count');
    expect(after).toEqual(before);
  });

  it('is for the roles that compute', async () => {
    const response = await request(ctx.app).post(`/api/sweeps/${sweepId}/points/0/pull`).set(bearer(tokens.analyst)).send({});
    expect(response.status).toBe(403);
  });
});

// ---------------------------------------------------------------------------------------------------

describe('GET /api/sweeps/:id/surface with at', () => {
  let sweepId: string;
  let twoAxis: string;

  beforeAll(async () => {
    sweepId = await writeSweep({ axes: AXES_3 });
    twoAxis = await writeSweep({ axes: AXES_3.slice(0, 2) });
  });

  it('cuts a three-axis sweep at the listed value of the remaining axis nearest to at, and says which', async () => {
    // x = axis 0 (seat force), y = axis 2 (ratio): the remaining axis is the setpoint, values 60, 80, 70, 90 kPa.
    const response = await request(ctx.app)
      .get(`/api/sweeps/${sweepId}/surface`)
      .query({ metric: 'settledBoostPa', x: 0, y: 2, at: 72_000 })
      .set(bearer(tokens.analyst));
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body.slice).toEqual({ axis: 1, path: 'supply.regulatorSetpointPa', index: 2, value: 70_000, requested: 72_000 });
    const stored = await ctx.knex('sweep_points').where({ sweep_id: sweepId }).where('axis1', 70_000).orderBy('point_index');
    const expected = AXES_3[2]!.values.map((ratio) =>
      AXES_3[0]!.values.map((seat) => stored.find((p) => p.axis0 === seat && p.axis2 === ratio)?.settled_boost_pa ?? null),
    );
    expect(response.body.z).toEqual(expected);
  });

  it('gives the same cut for at as for the index it picks', async () => {
    const byAt = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface`).query({ metric: 'crackBoostPa', x: 1, y: 2, at: 100 }).set(bearer(tokens.analyst));
    const bySlice = await request(ctx.app).get(`/api/sweeps/${sweepId}/surface`).query({ metric: 'crackBoostPa', x: 1, y: 2, slice: 1 }).set(bearer(tokens.analyst));
    expect(byAt.body.slice).toMatchObject({ axis: 0, index: 1, value: 100 });
    expect(byAt.body.z).toEqual(bySlice.body.z);
  });

  it('refuses at on a two-axis sweep, outside the axis and not a number, naming at', async () => {
    const cases: [string, Record<string, string | number>][] = [
      [twoAxis, { x: 0, y: 1, at: 70_000 }],
      [sweepId, { x: 0, y: 2, at: 50_000 }],
      [sweepId, { x: 0, y: 2, at: 95_000 }],
      [sweepId, { x: 0, y: 2, at: 'high' }],
    ];
    for (const [id, query] of cases) {
      const response = await request(ctx.app).get(`/api/sweeps/${id}/surface`).query(query).set(bearer(tokens.analyst));
      expect(response.status, JSON.stringify(query)).toBe(400);
      expect(response.body.error.fields, JSON.stringify(query)).toHaveProperty('at');
    }
  });

  it('reads a 100 × 100 cut of a three-axis sweep with one indexed query on the points', async () => {
    const axes: Axis[] = [
      { path: 'springs.0.seatForceN', values: Array.from({ length: 100 }, (_, i) => 100 + i) },
      { path: 'exhaust.ratio', values: [1.2, 1.5] },
      { path: 'supply.regulatorSetpointPa', values: Array.from({ length: 100 }, (_, i) => 50_000 + i * 500) },
    ];
    const big = await writeSweep({ axes, level: 'static' });
    await ctx.knex.raw('analyze sweep_points');
    const queries: { sql: string; bindings: readonly unknown[] }[] = [];
    const listen = (q: { sql: string; bindings?: readonly unknown[] }) => {
      if (q.sql.includes('sweep_points')) queries.push({ sql: q.sql, bindings: q.bindings ?? [] });
    };
    ctx.knex.on('query', listen);
    const response = await request(ctx.app).get(`/api/sweeps/${big}/surface`).query({ metric: 'crackBoostPa', x: 0, y: 2, at: 1.5 }).set(bearer(tokens.analyst));
    ctx.knex.off('query', listen);
    expect(response.status).toBe(200);
    expect(response.body.z).toHaveLength(100);
    expect(response.body.z[0]).toHaveLength(100);
    expect(queries).toHaveLength(1);
    // The query as the driver got it ($1 placeholders). A test database holds few sweeps, where reading
    // the whole table can be cheapest; with that ruled out, the plan shows what the key alone can serve.
    const connection = (await ctx.knex.client.acquireConnection()) as { query(sql: string, values?: readonly unknown[]): Promise<{ rows: Record<string, string>[] }> };
    let text: string;
    try {
      await connection.query('begin');
      await connection.query('set local enable_seqscan = off');
      const plan = await connection.query(`explain ${queries[0]!.sql}`, queries[0]!.bindings);
      text = plan.rows.map((r) => r['QUERY PLAN']).join('\n');
      await connection.query('rollback');
    } finally {
      await ctx.knex.client.releaseConnection(connection);
    }
    // Seq scans are only made costly, not impossible: a query no index could serve would still plan one.
    expect(text).not.toMatch(/Seq Scan/);
    expect(text).toMatch(/(Index Scan using|Bitmap Index Scan on) sweep_points_\w+/);
    expect(text).toMatch(/Index Cond: \(+sweep_id = '[0-9a-f-]+'::uuid/);
  });
});
