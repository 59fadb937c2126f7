import { defaultScenario } from '@crackpoint/sim-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'actions');
  tokens = await tokensFor(ctx.app, shop);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });

async function scenarioAs(role: Role, body: Record<string, unknown>) {
  const response = await request(ctx.app).post('/api/scenarios').set(bearer(tokens[role])).send(body);
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body.scenario as { id: string; name: string; data: ReturnType<typeof defaultScenario>; version: number; sources: Record<string, unknown> };
}

describe('POST /api/scenarios/:id/clone', () => {
  it('copies data and library sources into a scenario the caller owns, at version 1', async () => {
    const spring = (await request(ctx.app).post('/api/library/springs').set(bearer(tokens.engineer)).send({ name: 'Clone spring', data: { from: 'seat', seatForceN: 180, rateNPerM: 4200 } })).body.item;
    const original = await scenarioAs('engineer', { name: 'Original', sources: { springIds: [spring.id] } });
    await request(ctx.app).patch(`/api/scenarios/${original.id}`).set(bearer(tokens.engineer)).send({ name: 'Original v2', version: 1 });

    const response = await request(ctx.app).post(`/api/scenarios/${original.id}/clone`).set(bearer(tokens.builder));
    expect(response.status).toBe(201);
    const copy = response.body.scenario;
    expect(copy).toMatchObject({ name: 'Original v2 (copy)', version: 1, ownerId: shop.members.builder.id });
    expect(copy.id).not.toBe(original.id);
    expect(copy.data).toEqual(original.data);
    expect(copy.sources.springIds).toEqual([spring.id]);
    const audit = await ctx.knex('audit_log').where({ entity_id: copy.id }).first();
    expect(audit).toMatchObject({ action: 'clone', actor_id: shop.members.builder.id });
    expect(audit.changes.clonedFrom).toEqual({ to: original.id });

    // The builder owns the copy, so may change it; the original stays the engineer's.
    const edit = await request(ctx.app).patch(`/api/scenarios/${copy.id}`).set(bearer(tokens.builder)).send({ name: 'Mine now', version: 1 });
    expect(edit.status).toBe(200);
  });

  it('takes a name of its own, and returns 400 naming name when it is blank', async () => {
    const original = await scenarioAs('engineer', { name: 'Named clone source' });
    const named = await request(ctx.app).post(`/api/scenarios/${original.id}/clone`).set(bearer(tokens.admin)).send({ name: 'Track day copy' });
    expect(named.body.scenario.name).toBe('Track day copy');
    const blank = await request(ctx.app).post(`/api/scenarios/${original.id}/clone`).set(bearer(tokens.admin)).send({ name: '  ' });
    expect(blank.status).toBe(400);
    expect(blank.body.error.fields).toEqual({ name: 'must not be empty' });
  });
});

describe('POST /api/scenarios/:id/balance', () => {
  it('gives the same balance as POST /api/balance with the stored data', async () => {
    const data = defaultScenario();
    data.exhaust.ratio = 1.7;
    const stored = await scenarioAs('engineer', { name: 'Balanced', data });
    const byId = await request(ctx.app).post(`/api/scenarios/${stored.id}/balance`).set(bearer(tokens.analyst));
    const byBody = await request(ctx.app).post('/api/balance').set(bearer(tokens.analyst)).send({ scenario: data });
    expect(byId.status).toBe(200);
    expect(byId.body).toEqual(byBody.body);
    expect(byId.body.balance.ratio).toBe(1.7);
  });

  it('returns 422 naming the field when the stored scenario is no longer valid', async () => {
    const stored = await scenarioAs('engineer', { name: 'Outdated' });
    const data = { ...stored.data, exhaust: { ...stored.data.exhaust, ratio: 99 } };
    await ctx.knex('scenarios').where({ id: stored.id }).update({ data: JSON.stringify(data) });
    const response = await request(ctx.app).post(`/api/scenarios/${stored.id}/balance`).set(bearer(tokens.analyst));
    expect(response.status).toBe(422);
    expect(response.body.error).toMatchObject({ code: 'scenario_outdated', fields: { 'data.exhaust.ratio': 'must be at most 4' } });
  });
});

describe('POST /api/scenarios/:id/solve', () => {
  it('gives any role the seat force for a crack boost, which the balance of that spring then meets', async () => {
    const stored = await scenarioAs('engineer', { name: 'Solved' });
    const target = 82_737; // 12 psi
    const response = await request(ctx.app)
      .post(`/api/scenarios/${stored.id}/solve`)
      .set(bearer(tokens.analyst))
      .send({ unknown: 'seat-force', target: 'crack', targetBoostPa: target });
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    expect(response.body).toMatchObject({ scenarioId: stored.id, scenarioVersion: 1, solve: { status: 'solved', unknown: 'seat-force', pulls: 0 } });
    const seatForceN = response.body.solve.value;
    const rateNPerM = stored.data.springs[0]!.rateNPerM;
    const data = { ...stored.data, springs: [{ from: 'seat', seatForceN, rateNPerM }] };
    const check = await request(ctx.app).post('/api/balance').set(bearer(tokens.analyst)).send({ scenario: data });
    expect(Math.abs(check.body.balance.crack.boostPa - target)).toBeLessThan(1);
  });

  it('answers a band with each end, and a target out of reach with the nearest value', async () => {
    const data = { ...defaultScenario(), control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: 68_948 } };
    const stored = await scenarioAs('engineer', { name: 'On CO2', data });
    const band = await request(ctx.app)
      .post(`/api/scenarios/${stored.id}/solve`)
      .set(bearer(tokens.builder))
      .send({ unknown: 'setpoint', target: 'crack', targetBoostPa: 137_895, ratioBand: [1.4, 1.8] });
    expect(band.status).toBe(200);
    expect(band.body.solve.band.map((b: { ratio: number }) => b.ratio)).toEqual([1.4, 1.8]);
    const low = await request(ctx.app)
      .post(`/api/scenarios/${stored.id}/solve`)
      .set(bearer(tokens.builder))
      .send({ unknown: 'setpoint', target: 'crack', targetBoostPa: 13_790 });
    expect(low.body.solve).toMatchObject({ status: 'unreachable', reason: 'below-range', nearest: { value: 0 } });
  });

  it('refuses with 4xx naming the field: a bad body, an unknown the scenario has no place for, a settled target', async () => {
    const stored = await scenarioAs('engineer', { name: 'Refused' });
    const post = (body: Record<string, unknown>) => request(ctx.app).post(`/api/scenarios/${stored.id}/solve`).set(bearer(tokens.engineer)).send(body);
    const bad = await post({ unknown: 'spring', target: 'crack', targetBoostPa: -5 });
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.body.error.fields).sort()).toEqual(['targetBoostPa', 'unknown']);
    const band = await post({ unknown: 'seat-force', target: 'crack', targetBoostPa: 82_737, ratioBand: [1.8, 1.4] });
    expect(band.status).toBe(400);
    expect(band.body.error.fields).toEqual({ 'ratioBand.1': 'must be at least the low end of the band' });
    const duty = await post({ unknown: 'duty', target: 'crack', targetBoostPa: 82_737 });
    expect(duty.status).toBe(422);
    expect(duty.body.error.fields.unknown).toMatch(/^control\.kind must be a three- or four-port solenoid/);
    const settled = await post({ unknown: 'seat-force', target: 'settled', targetBoostPa: 82_737 });
    expect(settled.status).toBe(422);
    expect(settled.body.error.fields).toHaveProperty('target');
  });
});

describe('POST /api/scenarios/:id/pull', () => {
  it('runs one dynamic pull of the stored scenario and says which version it ran', async () => {
    const stored = await scenarioAs('builder', { name: 'Pulled' });
    const response = await request(ctx.app).post(`/api/scenarios/${stored.id}/pull`).set(bearer(tokens.builder));
    expect(response.status, JSON.stringify(response.body).slice(0, 300)).toBe(200);
    const { pull } = response.body;
    expect(response.body).toMatchObject({ scenarioId: stored.id, scenarioVersion: 1, maxSteps: stored.data.solver.maxSteps });
    expect(pull.stats.outcome).toBe('converged');
    // 4 s sampled every 10 ms (the default scenario), both ends included.
    expect(pull.series.timeS).toHaveLength(401);
    expect(pull.series.boostPa).toHaveLength(401);
    expect(pull.metrics.peakBoostPa).toBeGreaterThan(0);
    expect(pull.notes.some((note: string) => /hurt people and engines/.test(note))).toBe(true);
  });

  it('runs with the API step cap when the scenario asks for more, and reports the outcome', async () => {
    const capped = createTestContext({ PULL_MAX_STEPS: '100' });
    try {
      const stored = await scenarioAs('engineer', { name: 'Capped pull' });
      const token = tokens.engineer;
      const response = await request(capped.app).post(`/api/scenarios/${stored.id}/pull`).set(bearer(token));
      expect(response.status).toBe(200);
      expect(response.body.maxSteps).toBe(100);
      expect(response.body.pull.stats.outcome).toBe('max-steps');
    } finally {
      await capped.close();
    }
  });

  it('refuses a pull with more samples than allowed with 422 naming the field', async () => {
    const small = createTestContext({ PULL_MAX_SAMPLES: '100' });
    try {
      const stored = await scenarioAs('engineer', { name: 'Too long a pull' });
      const response = await request(small.app).post(`/api/scenarios/${stored.id}/pull`).set(bearer(tokens.engineer));
      expect(response.status).toBe(422);
      expect(response.body.error.code).toBe('pull_too_large');
      expect(response.body.error.fields['data.solver.sampleIntervalS']).toContain('401 samples');
    } finally {
      await small.close();
    }
  });

  it('answers 503 when the pull does not finish within the time limit, and the next one still runs', async () => {
    const hurried = createTestContext({ PULL_TIME_LIMIT_MS: '10' });
    try {
      const stored = await scenarioAs('engineer', { name: 'Hurried pull' });
      const response = await request(hurried.app).post(`/api/scenarios/${stored.id}/pull`).set(bearer(tokens.engineer));
      expect(response.status).toBe(503);
      expect(response.body.error.code).toBe('pull_timed_out');
      expect(response.body.error.message).toMatch(/longer than 10 ms/);
    } finally {
      await hurried.close();
    }
    const stored = await scenarioAs('engineer', { name: 'Unhurried pull' });
    expect((await request(ctx.app).post(`/api/scenarios/${stored.id}/pull`).set(bearer(tokens.engineer))).status).toBe(200);
  });
});
