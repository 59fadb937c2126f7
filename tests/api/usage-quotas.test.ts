import { computePointRow, processSweepChunk, type ComputeBatch } from '@crackpoint/worker';
import request from 'supertest';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

// No worker consumes this file's queue: chunks are processed by hand, so what each step books can be
// read between steps, and the queue's waiting jobs show exactly what a request enqueued.
let ctx: TestContext;

const DEFAULT_UNITS = 777;
const month = () => new Date().toISOString().slice(0, 7);
const firstDay = () => `${month()}-01`;

beforeAll(() => {
  ctx = createTestContext({ SWEEP_CHUNK_SIZE: '1000', SWEEP_DYNAMIC_CHUNK_SIZE: '2', DEFAULT_WORKSPACE_MONTHLY_UNITS: String(DEFAULT_UNITS) });
});

afterAll(async () => {
  await ctx.close();
});

interface Shop {
  workspace: TestWorkspace;
  tokens: Record<Role, string>;
  scenarioId: string;
}

const shops: TestWorkspace[] = [];
afterAll(async () => {
  for (const workspace of shops) await deleteWorkspace(ctx.knex, workspace);
});

async function newShop(label: string): Promise<Shop> {
  const workspace = await createWorkspace(ctx.knex, label);
  shops.push(workspace);
  const tokens = await tokensFor(ctx.app, workspace);
  // A builder's scenario, so both the builder and the engineer may sweep it (builders sweep only their own).
  const created = await request(ctx.app).post('/api/scenarios').set('Authorization', `Bearer ${tokens.builder}`).send({ name: `${label} base` });
  expect(created.status).toBe(201);
  return { workspace, tokens, scenarioId: created.body.scenario.id };
}

const as = (token: string) => ({ Authorization: `Bearer ${token}` });

async function setWorkspaceQuota(shop: Shop, units: number): Promise<void> {
  const response = await request(ctx.app).put('/api/quotas/workspace').set(as(shop.tokens.admin)).send({ monthlyComputeUnits: units });
  expect(response.status).toBe(200);
}

/** Points: seat force × ratio, `forces` × `ratios` of them. */
function sweepBody(shop: Shop, level: 'static' | 'dynamic' | 'both', forces: number, ratios = 1) {
  return {
    scenarioId: shop.scenarioId,
    level,
    axes: [
      { path: 'springs.0.seatForceN', range: { from: 100, to: 200, count: forces } },
      ...(ratios > 1 ? [{ path: 'exhaust.ratio', range: { from: 1.2, to: 1.8, count: ratios } }] : []),
    ],
  };
}

async function createSweep(shop: Shop, body: object, role: Role = 'engineer') {
  return request(ctx.app).post('/api/sweeps').set(as(shop.tokens[role])).send(body);
}

async function waitingJobs(): Promise<number> {
  const counts = await ctx.queue.getJobCounts('waiting', 'delayed', 'prioritized');
  return Object.values(counts).reduce((a, b) => a + b, 0);
}

async function ledgerOf(sweepId: string): Promise<number> {
  const row = await ctx.knex('usage_ledger').where({ sweep_id: sweepId, kind: 'sweep' }).first<{ units: string | null }>(ctx.knex.raw('sum(compute_units) as units'));
  return Number(row?.units ?? 0);
}

const sweepRow = (id: string) => ctx.knex('sweeps').where({ id }).first<{ state: string; compute_units: number; reserved_units: number; points_done: number }>();

async function usage(shop: Shop, role: Role = 'admin', query: Record<string, string> = {}) {
  const response = await request(ctx.app).get('/api/usage').set(as(shop.tokens[role])).query(query);
  expect(response.status).toBe(200);
  return response.body.usage;
}

async function runAllChunks(sweepId: string, compute?: ComputeBatch): Promise<void> {
  const chunks = await ctx.knex('sweep_chunks').where({ sweep_id: sweepId }).orderBy('chunk_index').pluck<number[]>('chunk_index');
  for (const chunkIndex of chunks) await processSweepChunk({ knex: ctx.knex, ...(compute ? { compute } : {}) }, { sweepId, chunkIndex });
}

describe('POST /api/sweeps/estimate', () => {
  it('prices static points at 1 unit per 1,000 rounded up, dynamic points at 1 each, both as the sum', async () => {
    const shop = await newShop('estimate');
    const estimate = async (level: 'static' | 'dynamic' | 'both', forces: number, ratios: number) => {
      const response = await request(ctx.app).post('/api/sweeps/estimate').set(as(shop.tokens.builder)).send(sweepBody(shop, level, forces, ratios));
      expect(response.status).toBe(200);
      return response.body.estimate;
    };
    expect(await estimate('static', 6, 1)).toEqual({ pointCount: 6, computeUnits: 1, remaining: { member: null, workspace: DEFAULT_UNITS } });
    expect((await estimate('static', 40, 25)).computeUnits).toBe(1);
    expect((await estimate('static', 41, 25)).computeUnits).toBe(2);
    expect((await estimate('dynamic', 3, 4)).computeUnits).toBe(12);
    expect((await estimate('both', 3, 4)).computeUnits).toBe(13);
    expect(await ctx.knex('sweeps').where({ workspace_id: shop.workspace.id })).toHaveLength(0);
  });

  it("answers the caller's own remaining when they have a limit of their own", async () => {
    const shop = await newShop('estimate-member');
    await request(ctx.app).put(`/api/quotas/members/${shop.workspace.members.builder.id}`).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 40 });
    const response = await request(ctx.app).post('/api/sweeps/estimate').set(as(shop.tokens.builder)).send(sweepBody(shop, 'dynamic', 2));
    expect(response.body.estimate).toEqual({ pointCount: 2, computeUnits: 2, remaining: { member: 40, workspace: DEFAULT_UNITS } });
  });
});

describe('POST /api/sweeps against the quota', () => {
  let shop: Shop;
  beforeEach(async () => {
    shop = await newShop('over');
    await setWorkspaceQuota(shop, 5);
  });

  it('refuses a sweep over the workspace quota with 402, writing, reserving and enqueueing nothing', async () => {
    const before = await waitingJobs();
    const response = await createSweep(shop, sweepBody(shop, 'dynamic', 6));
    expect(response.status).toBe(402);
    expect(response.body.error.code).toBe('quota_exceeded');
    expect(response.body.error.message).toContain('needs 6 compute units');
    expect(response.body.error.message).toContain('the workspace has 5 compute units left');
    expect(await ctx.knex('sweeps').where({ workspace_id: shop.workspace.id })).toHaveLength(0);
    expect(await waitingJobs()).toBe(before);
    const after = await usage(shop);
    expect(after.workspace).toMatchObject({ quota: 5, spent: 0, reserved: 0, remaining: 5 });
  });

  it("refuses a sweep over the member's own limit and says so, and takes it once the limit is removed", async () => {
    await setWorkspaceQuota(shop, 100);
    const member = `/api/quotas/members/${shop.workspace.members.builder.id}`;
    expect((await request(ctx.app).put(member).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 3 })).status).toBe(200);
    const refused = await createSweep(shop, sweepBody(shop, 'dynamic', 4), 'builder');
    expect(refused.status).toBe(402);
    expect(refused.body.error.message).toContain('you have 3 compute units left of your own monthly limit');
    // Another member is held only by the workspace's quota.
    expect((await createSweep(shop, sweepBody(shop, 'dynamic', 4), 'engineer')).status).toBe(201);

    expect((await request(ctx.app).put(member).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: null })).status).toBe(200);
    expect((await createSweep(shop, sweepBody(shop, 'dynamic', 4), 'builder')).status).toBe(201);
    const after = await usage(shop);
    expect(after.workspace).toMatchObject({ reserved: 8, spent: 0, remaining: 92 });
    expect(after.members.find((m: { userId: string }) => m.userId === shop.workspace.members.builder.id)).toMatchObject({ quota: null, reserved: 4 });
  });

  it('refuses malformed sweeps with 400 and reserves nothing', async () => {
    const before = await waitingJobs();
    const unknownPath = await createSweep(shop, { scenarioId: shop.scenarioId, axes: [{ path: 'no.such.field', values: [1, 2] }] });
    expect(unknownPath.status).toBe(400);
    const noAxes = await createSweep(shop, { scenarioId: shop.scenarioId, level: 'dynamic', axes: [] });
    expect(noAxes.status).toBe(400);
    const badLevel = await request(ctx.app).post('/api/sweeps/estimate').set(as(shop.tokens.engineer)).send({ ...sweepBody(shop, 'static', 2), level: 'fast' });
    expect(badLevel.status).toBe(400);
    expect(badLevel.body.error.fields).toHaveProperty('level');
    expect(await ctx.knex('sweeps').where({ workspace_id: shop.workspace.id })).toHaveLength(0);
    expect(await waitingJobs()).toBe(before);
    expect((await usage(shop)).workspace.reserved).toBe(0);
  });

  it('keeps the point limit ahead of the quota', async () => {
    const response = await createSweep(shop, sweepBody(shop, 'static', 1000, 200));
    expect(response.status).toBe(400);
    expect(response.body.error.fields.axes).toContain('at most');
  });

  it('lets concurrent creates take no more than the quota', async () => {
    // Five sweeps of 2 units against 5 units: exactly two fit, whatever the interleaving.
    const responses = await Promise.all(Array.from({ length: 5 }, () => createSweep(shop, sweepBody(shop, 'dynamic', 2))));
    const statuses = responses.map((r) => r.status).sort();
    expect(statuses).toEqual([201, 201, 402, 402, 402]);
    const reserved = await ctx.knex('sweeps').where({ workspace_id: shop.workspace.id }).sum<{ sum: string }[]>('reserved_units as sum');
    expect(Number(reserved[0]?.sum)).toBe(4);
    expect((await usage(shop)).workspace).toMatchObject({ reserved: 4, remaining: 1 });
  });
});

describe('the usage ledger as points complete', () => {
  it("books a completed sweep's cost, once, however often its chunks run", async () => {
    const shop = await newShop('ledger');
    const created = await createSweep(shop, sweepBody(shop, 'static', 50, 50));
    expect(created.status).toBe(201);
    const sweepId = created.body.sweep.id;
    expect(await sweepRow(sweepId)).toMatchObject({ compute_units: 3, reserved_units: 3 });
    expect((await usage(shop, 'engineer')).own).toMatchObject({ spent: 0, reserved: 3, remaining: DEFAULT_UNITS - 3 });

    await runAllChunks(sweepId);
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'done', points_done: 2500, reserved_units: 0 });
    expect(await ledgerOf(sweepId)).toBe(3);

    // A chunk repeated after it wrote its points (a retry, a duplicate job): nothing more is booked.
    await ctx.knex('sweep_chunks').where({ sweep_id: sweepId, chunk_index: 1 }).update({ state: 'running' });
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 2 });
    expect(await ledgerOf(sweepId)).toBe(3);
    const entries = await ctx.knex('usage_ledger').where({ sweep_id: sweepId });
    expect(entries.every((e) => e.user_id === shop.workspace.members.engineer.id && e.kind === 'sweep')).toBe(true);
    expect((await usage(shop, 'engineer')).own).toMatchObject({ spent: 3, reserved: 0, remaining: DEFAULT_UNITS - 3 });
  });

  it('charges a dynamic sweep one unit a point as its batches land, and a both-level sweep the sum', async () => {
    const shop = await newShop('ledger-dynamic');
    const dynamic = (await createSweep(shop, sweepBody(shop, 'dynamic', 3))).body.sweep.id;
    await processSweepChunk({ knex: ctx.knex }, { sweepId: dynamic, chunkIndex: 0 });
    expect(await ledgerOf(dynamic)).toBe(2);
    expect(await sweepRow(dynamic)).toMatchObject({ state: 'running', reserved_units: 1 });
    await processSweepChunk({ knex: ctx.knex }, { sweepId: dynamic, chunkIndex: 1 });
    expect(await ledgerOf(dynamic)).toBe(3);
    expect(await sweepRow(dynamic)).toMatchObject({ state: 'done', reserved_units: 0 });

    const both = (await createSweep(shop, sweepBody(shop, 'both', 2))).body.sweep.id;
    await runAllChunks(both);
    expect(await ledgerOf(both)).toBe(3);
    expect((await usage(shop)).workspace).toMatchObject({ spent: 6, reserved: 0, remaining: DEFAULT_UNITS - 6 });
  });

  it('gives back the units of points a cancelled sweep never ran', async () => {
    const shop = await newShop('cancel');
    const sweepId = (await createSweep(shop, sweepBody(shop, 'dynamic', 6))).body.sweep.id;
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 0 });
    expect((await usage(shop)).workspace).toMatchObject({ spent: 2, reserved: 4 });

    const cancelled = await request(ctx.app).post(`/api/sweeps/${sweepId}/cancel`).set(as(shop.tokens.engineer)).send({});
    expect(cancelled.status).toBe(200);
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'cancelled', reserved_units: 0 });
    // A chunk that was already taken by a worker finds the sweep cancelled and books nothing.
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 1 });
    expect(await ledgerOf(sweepId)).toBe(2);
    expect((await usage(shop)).workspace).toMatchObject({ spent: 2, reserved: 0, remaining: DEFAULT_UNITS - 2 });
  });

  it('charges nothing for failed points and releases their reservation at once', async () => {
    const shop = await newShop('failed');
    const sweepId = (await createSweep(shop, sweepBody(shop, 'dynamic', 4))).body.sweep.id;
    // Points 1 and 2 fail as a pull that stops early would; the others are computed as usual.
    const compute: ComputeBatch = async (batch) =>
      batch.indices.map((index) => {
        const row = computePointRow(batch.sweepId, batch.scenario, batch.axes, index, batch.level);
        return index === 1 || index === 2 ? { ...row, status: 'failed' as const, error: 'the pull stopped early (test)' } : row;
      });
    await processSweepChunk({ knex: ctx.knex, compute }, { sweepId, chunkIndex: 0 });
    expect(await ledgerOf(sweepId)).toBe(1);
    expect(await sweepRow(sweepId)).toMatchObject({ reserved_units: 2 });
    await processSweepChunk({ knex: ctx.knex, compute }, { sweepId, chunkIndex: 1 });
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'done', reserved_units: 0 });
    expect(await ledgerOf(sweepId)).toBe(2);
    expect((await usage(shop)).workspace).toMatchObject({ spent: 2, reserved: 0 });
  });

  it('releases the reservation of a sweep that failed for good', async () => {
    const shop = await newShop('failed-sweep');
    const sweepId = (await createSweep(shop, sweepBody(shop, 'dynamic', 4))).body.sweep.id;
    await processSweepChunk({ knex: ctx.knex }, { sweepId, chunkIndex: 0 });
    const { markSweepFailed } = await import('@crackpoint/worker');
    await markSweepFailed(ctx.knex, sweepId);
    expect(await sweepRow(sweepId)).toMatchObject({ state: 'failed', reserved_units: 0 });
    expect((await usage(shop)).workspace).toMatchObject({ spent: 2, reserved: 0 });
  });
});

describe('purchases, grants and the months of the ledger', () => {
  it('counts purchases and grants in what is left and lists months back to the first entry', async () => {
    const shop = await newShop('ledger-months');
    await setWorkspaceQuota(shop, 100);
    const now = new Date();
    const earlier = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - 2, 1)).toISOString().slice(0, 10);
    await ctx.knex('usage_ledger').insert([
      { workspace_id: shop.workspace.id, kind: 'purchase', compute_units: 500, period_month: firstDay(), external_ref: `pay_${shop.workspace.id}` },
      { workspace_id: shop.workspace.id, user_id: shop.workspace.members.builder.id, kind: 'grant', compute_units: 20, period_month: firstDay() },
      { workspace_id: shop.workspace.id, user_id: shop.workspace.members.builder.id, kind: 'pull', compute_units: 7, period_month: earlier },
    ]);
    const current = await usage(shop);
    expect(current.workspace).toMatchObject({ quota: 100, quotaIsDefault: false, purchased: 500, granted: 20, spent: 0, remaining: 620 });
    expect(current.months).toHaveLength(3);
    expect(current.months[0]).toBe(month());
    expect(current.months[2]).toBe(earlier.slice(0, 7));

    const past = await usage(shop, 'admin', { month: earlier.slice(0, 7) });
    expect(past.workspace).toMatchObject({ spent: 7, purchased: 0, remaining: 93 });
    expect(past.members.find((m: { userId: string }) => m.userId === shop.workspace.members.builder.id)).toMatchObject({ spent: 7 });

    // A member's grant raises their own limit as well as the workspace's pool.
    await request(ctx.app).put(`/api/quotas/members/${shop.workspace.members.builder.id}`).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 10 });
    expect((await usage(shop, 'builder')).own).toMatchObject({ quota: 10, remaining: 30 });
  });

  it('shows members who are not admins their own usage only', async () => {
    const shop = await newShop('own-usage');
    const mine = await usage(shop, 'analyst');
    expect(mine).toMatchObject({ month: month(), workspace: null, members: null, own: { userId: shop.workspace.members.analyst.id, spent: 0, reserved: 0, quota: null, remaining: DEFAULT_UNITS } });
  });

  it('refuses a month that is not YYYY-MM', async () => {
    const shop = await newShop('bad-month');
    const response = await request(ctx.app).get('/api/usage').set(as(shop.tokens.admin)).query({ month: '2026-13' });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('month');
  });
});

describe('quotas set by admins', () => {
  it('answers the configured default until the workspace has its own, and audits every change', async () => {
    const shop = await newShop('quotas');
    const initial = await request(ctx.app).get('/api/quotas').set(as(shop.tokens.admin));
    expect(initial.status).toBe(200);
    expect(initial.body.quotas.workspace).toEqual({ monthlyComputeUnits: DEFAULT_UNITS, isDefault: true, updatedAt: null });
    expect(initial.body.quotas.members).toHaveLength(4);
    expect(initial.body.quotas.members.every((m: { monthlyComputeUnits: null }) => m.monthlyComputeUnits === null)).toBe(true);

    const set = await request(ctx.app).put('/api/quotas/workspace').set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 2500 });
    expect(set.body.quotas.workspace).toMatchObject({ monthlyComputeUnits: 2500, isDefault: false });
    const raised = await request(ctx.app).put('/api/quotas/workspace').set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 3000 });
    expect(raised.body.quotas.workspace.monthlyComputeUnits).toBe(3000);
    const builder = shop.workspace.members.builder.id;
    const member = await request(ctx.app).put(`/api/quotas/members/${builder}`).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 120 });
    expect(member.body.quotas.members.find((m: { userId: string }) => m.userId === builder).monthlyComputeUnits).toBe(120);
    const removed = await request(ctx.app).put(`/api/quotas/members/${builder}`).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: null });
    expect(removed.body.quotas.members.find((m: { userId: string }) => m.userId === builder).monthlyComputeUnits).toBeNull();
    expect(await ctx.knex('quotas').where({ workspace_id: shop.workspace.id, user_id: builder })).toHaveLength(0);

    const audit = await ctx.knex('audit_log').where({ workspace_id: shop.workspace.id, entity_type: 'quota' }).orderBy('created_at').orderBy('id');
    expect(audit.map((a) => a.action).sort()).toEqual(['create', 'create', 'delete', 'update']);
    expect(audit.every((a) => a.actor_id === shop.workspace.members.admin.id)).toBe(true);
    const update = audit.find((a) => a.action === 'update');
    expect(update.changes).toEqual({ monthlyComputeUnits: { from: 2500, to: 3000 } });
  });

  it('is for admins only', async () => {
    const shop = await newShop('quotas-roles');
    for (const role of ['engineer', 'builder', 'analyst'] as const) {
      expect((await request(ctx.app).get('/api/quotas').set(as(shop.tokens[role]))).status).toBe(403);
      expect((await request(ctx.app).put('/api/quotas/workspace').set(as(shop.tokens[role])).send({ monthlyComputeUnits: 1 })).status).toBe(403);
    }
    expect(await ctx.knex('quotas').where({ workspace_id: shop.workspace.id })).toHaveLength(0);
  });

  it("refuses another workspace's member with 404 and a negative or fractional quota with 400", async () => {
    const shop = await newShop('quotas-bad');
    const rival = await newShop('quotas-rival');
    const foreign = await request(ctx.app).put(`/api/quotas/members/${rival.workspace.members.builder.id}`).set(as(shop.tokens.admin)).send({ monthlyComputeUnits: 5 });
    expect(foreign.status).toBe(404);
    for (const monthlyComputeUnits of [-1, 2.5, '100']) {
      const response = await request(ctx.app).put('/api/quotas/workspace').set(as(shop.tokens.admin)).send({ monthlyComputeUnits });
      expect(response.status).toBe(400);
      expect(response.body.error.fields).toHaveProperty('monthlyComputeUnits');
    }
    expect(await ctx.knex('quotas').whereIn('workspace_id', [shop.workspace.id, rival.workspace.id])).toHaveLength(0);
  });
});

describe('a pull on the server', () => {
  it('costs one unit, and is refused with 402 when none is left', async () => {
    const shop = await newShop('pull');
    await setWorkspaceQuota(shop, 1);
    const pull = () => request(ctx.app).post(`/api/scenarios/${shop.scenarioId}/pull`).set(as(shop.tokens.engineer)).send({});
    const first = await pull();
    expect(first.status).toBe(200);
    const entries = await ctx.knex('usage_ledger').where({ workspace_id: shop.workspace.id });
    expect(entries).toHaveLength(1);
    expect(entries[0]).toMatchObject({ kind: 'pull', compute_units: '1', scenario_id: shop.scenarioId, user_id: shop.workspace.members.engineer.id });

    const second = await pull();
    expect(second.status).toBe(402);
    expect(second.body.error).toMatchObject({ code: 'quota_exceeded' });
    expect(second.body.error.message).toContain('A pull needs 1 compute unit');
    expect(await ctx.knex('usage_ledger').where({ workspace_id: shop.workspace.id })).toHaveLength(1);
  });
});
