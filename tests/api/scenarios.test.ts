import { defaultScenario } from '@crackpoint/sim-core';
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

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'scenarios');
  rival = await createWorkspace(ctx.knex, 'scenarios-rival');
  tokens = await tokensFor(ctx.app, shop);
  rivalTokens = await tokensFor(ctx.app, rival);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await deleteWorkspace(ctx.knex, rival);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const countScenarios = async (workspaceId: string, name: string) =>
  Number((await ctx.knex('scenarios').where({ workspace_id: workspaceId, name }).count<{ n: string }[]>('* as n'))[0]?.n);

async function createAs(role: Role, body: Record<string, unknown>) {
  return request(ctx.app).post('/api/scenarios').set(bearer(tokens[role])).send(body);
}

describe('POST /api/scenarios', () => {
  it('creates a scenario from the defaults when data is left out', async () => {
    const response = await createAs('engineer', { name: 'Default gate' });
    expect(response.status).toBe(201);
    const scenario = response.body.scenario;
    expect(scenario).toMatchObject({ name: 'Default gate', version: 1, ownerId: shop.members.engineer.id });
    expect(scenario.data).toEqual(defaultScenario());
    expect(new Date(scenario.createdAt).toISOString()).toBe(scenario.createdAt);

    const row = await ctx.knex('scenarios').where({ id: scenario.id }).first();
    expect(row).toMatchObject({ workspace_id: shop.id, owner_id: shop.members.engineer.id, name: 'Default gate', version: 1 });
    expect(row.data).toEqual(defaultScenario());
  });

  it('stores a full scenario as given, with sim-core defaults filled in', async () => {
    const data = defaultScenario();
    data.springs = [{ from: 'seat', seatForceN: 200, rateNPerM: 5000 }];
    const response = await createAs('builder', { name: 'Stiffer spring', data });
    expect(response.status).toBe(201);
    const row = await ctx.knex('scenarios').where({ id: response.body.scenario.id }).first();
    expect(row.data.springs).toEqual([{ from: 'seat', seatForceN: 200, rateNPerM: 5000 }]);
  });

  it('returns 400 naming data.wastegate.valveDiameterM for a negative diameter, and writes nothing', async () => {
    const data = defaultScenario();
    data.wastegate.valveDiameterM = -0.04;
    const response = await createAs('engineer', { name: 'Negative valve', data });
    expect(response.status).toBe(400);
    expect(response.body.error.code).toBe('validation_failed');
    expect(response.body.error.fields['data.wastegate.valveDiameterM']).toMatch(/greater than 0/);
    expect(await countScenarios(shop.id, 'Negative valve')).toBe(0);
  });

  it('returns 400 naming a missing part of the scenario instead of merging defaults', async () => {
    const { wastegate: _dropped, ...partial } = defaultScenario();
    const response = await createAs('engineer', { name: 'No gate', data: partial });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('data.wastegate');
    expect(await countScenarios(shop.id, 'No gate')).toBe(0);
  });

  it('returns 400 naming name when it is missing or blank', async () => {
    const missing = await createAs('engineer', {});
    expect(missing.status).toBe(400);
    expect(missing.body.error.fields).toHaveProperty('name');
    const blank = await createAs('engineer', { name: '   ' });
    expect(blank.status).toBe(400);
    expect(blank.body.error.fields.name).toBe('must not be empty');
  });

  it('returns 400 for a field the request does not know', async () => {
    const response = await createAs('engineer', { name: 'Extra', colour: 'red' });
    expect(response.status).toBe(400);
    expect(await countScenarios(shop.id, 'Extra')).toBe(0);
  });

  it('returns 403 to an analyst and writes nothing', async () => {
    const response = await createAs('analyst', { name: 'Analyst try' });
    expect(response.status).toBe(403);
    expect(response.body.error.code).toBe('forbidden');
    expect(await countScenarios(shop.id, 'Analyst try')).toBe(0);
  });
});

describe('GET /api/scenarios', () => {
  it('lists only this workspace, newest change first', async () => {
    const mine = await createAs('admin', { name: 'Listed' });
    const theirs = await request(ctx.app).post('/api/scenarios').set(bearer(rivalTokens.admin)).send({ name: 'Rival listed' });
    expect(theirs.status).toBe(201);

    const response = await request(ctx.app).get('/api/scenarios').set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    const ids = (response.body.items as { id: string }[]).map((item) => item.id);
    expect(ids[0]).toBe(mine.body.scenario.id);
    expect(ids).not.toContain(theirs.body.scenario.id);
    const inDb = await ctx.knex('scenarios').where({ workspace_id: shop.id }).count<{ n: string }[]>('* as n');
    expect(response.body.total).toBe(Number(inDb[0]?.n));
  });

  it('pages with limit and offset', async () => {
    const response = await request(ctx.app).get('/api/scenarios?limit=1&offset=1').set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    expect(response.body.items).toHaveLength(1);
    expect(response.body.total).toBeGreaterThan(1);
  });
});

describe('GET /api/scenarios/:id', () => {
  it('returns the scenario to any member of the workspace', async () => {
    const created = await createAs('builder', { name: 'Readable' });
    const response = await request(ctx.app).get(`/api/scenarios/${created.body.scenario.id}`).set(bearer(tokens.analyst));
    expect(response.status).toBe(200);
    expect(response.body.scenario).toEqual(created.body.scenario);
  });

  it("returns 404 for another workspace's scenario, exactly like a missing one", async () => {
    const theirs = await request(ctx.app).post('/api/scenarios').set(bearer(rivalTokens.engineer)).send({ name: 'Secret' });
    const foreign = await request(ctx.app).get(`/api/scenarios/${theirs.body.scenario.id}`).set(bearer(tokens.admin));
    const missing = await request(ctx.app).get('/api/scenarios/00000000-0000-4000-8000-000000000000').set(bearer(tokens.admin));
    expect(foreign.status).toBe(404);
    expect(foreign.body).toEqual(missing.body);
  });

  it('returns 404 for an id that is not a uuid', async () => {
    const response = await request(ctx.app).get('/api/scenarios/not-an-id').set(bearer(tokens.admin));
    expect(response.status).toBe(404);
  });
});

describe('PATCH /api/scenarios/:id', () => {
  it('renames and changes data, and increments the version', async () => {
    const created = await createAs('engineer', { name: 'Before' });
    const data = defaultScenario();
    data.exhaust.ratio = 1.8;
    const response = await request(ctx.app)
      .patch(`/api/scenarios/${created.body.scenario.id}`)
      .set(bearer(tokens.engineer))
      .send({ name: 'After', data, version: 1 });
    expect(response.status).toBe(200);
    expect(response.body.scenario).toMatchObject({ name: 'After', version: 2 });
    expect(response.body.scenario.data.exhaust.ratio).toBe(1.8);
    expect(Date.parse(response.body.scenario.updatedAt)).toBeGreaterThanOrEqual(Date.parse(created.body.scenario.updatedAt));
    const row = await ctx.knex('scenarios').where({ id: created.body.scenario.id }).first();
    expect(row).toMatchObject({ name: 'After', version: 2 });
    expect(row.data.exhaust.ratio).toBe(1.8);
  });

  it('returns 409 version_conflict for a stale version and leaves the row alone', async () => {
    const created = await createAs('engineer', { name: 'Contested' });
    const url = `/api/scenarios/${created.body.scenario.id}`;
    const first = await request(ctx.app).patch(url).set(bearer(tokens.admin)).send({ name: 'First edit', version: 1 });
    expect(first.status).toBe(200);
    const stale = await request(ctx.app).patch(url).set(bearer(tokens.engineer)).send({ name: 'Second edit', version: 1 });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe('version_conflict');
    const row = await ctx.knex('scenarios').where({ id: created.body.scenario.id }).first();
    expect(row).toMatchObject({ name: 'First edit', version: 2 });
  });

  it('returns 400 naming the field for bad data and changes nothing', async () => {
    const created = await createAs('engineer', { name: 'Kept' });
    const data = defaultScenario();
    data.exhaust.ratio = 9;
    const response = await request(ctx.app)
      .patch(`/api/scenarios/${created.body.scenario.id}`)
      .set(bearer(tokens.engineer))
      .send({ data, version: 1 });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('data.exhaust.ratio');
    const row = await ctx.knex('scenarios').where({ id: created.body.scenario.id }).first();
    expect(row.version).toBe(1);
    expect(row.data).toEqual(defaultScenario());
  });

  it('returns 400 naming version when it is left out', async () => {
    const created = await createAs('engineer', { name: 'Unversioned' });
    const response = await request(ctx.app).patch(`/api/scenarios/${created.body.scenario.id}`).set(bearer(tokens.engineer)).send({ name: 'x' });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toHaveProperty('version');
  });

  it("lets a builder change their own scenario but not an engineer's", async () => {
    const own = await createAs('builder', { name: 'Builder own' });
    const ok = await request(ctx.app).patch(`/api/scenarios/${own.body.scenario.id}`).set(bearer(tokens.builder)).send({ name: 'Builder own 2', version: 1 });
    expect(ok.status).toBe(200);
    const other = await createAs('engineer', { name: 'Engineer only' });
    const refused = await request(ctx.app)
      .patch(`/api/scenarios/${other.body.scenario.id}`)
      .set(bearer(tokens.builder))
      .send({ name: 'Taken over', version: 1 });
    expect(refused.status).toBe(403);
    expect((await ctx.knex('scenarios').where({ id: other.body.scenario.id }).first()).name).toBe('Engineer only');
  });

  it('returns 403 to an analyst', async () => {
    const created = await createAs('engineer', { name: 'Analyst cannot' });
    const response = await request(ctx.app).patch(`/api/scenarios/${created.body.scenario.id}`).set(bearer(tokens.analyst)).send({ name: 'x', version: 1 });
    expect(response.status).toBe(403);
  });

  it("returns 404 for another workspace's scenario and does not touch it", async () => {
    const theirs = await request(ctx.app).post('/api/scenarios').set(bearer(rivalTokens.engineer)).send({ name: 'Not yours' });
    const response = await request(ctx.app)
      .patch(`/api/scenarios/${theirs.body.scenario.id}`)
      .set(bearer(tokens.admin))
      .send({ name: 'Mine now', version: 1 });
    expect(response.status).toBe(404);
    const row = await ctx.knex('scenarios').where({ id: theirs.body.scenario.id }).first();
    expect(row).toMatchObject({ name: 'Not yours', version: 1 });
  });
});

describe('GET /api/scenarios filters and sorting', () => {
  it('filters by part of the name and by owner, and sorts by name either way', async () => {
    const a = await createAs('engineer', { name: 'Filter Alpha gate' });
    const b = await createAs('builder', { name: 'filter beta gate' });
    const c = await createAs('builder', { name: 'Filter Gamma gate' });
    const get = async (query: Record<string, string>) =>
      ((await request(ctx.app).get('/api/scenarios').query(query).set(bearer(tokens.analyst))).body.items as { id: string }[]).map((s) => s.id);
    expect(await get({ q: 'FILTER', sort: 'name', order: 'asc' })).toEqual([a.body.scenario.id, b.body.scenario.id, c.body.scenario.id]);
    expect(await get({ q: 'filter', sort: 'name', order: 'desc' })).toEqual([c.body.scenario.id, b.body.scenario.id, a.body.scenario.id]);
    expect(await get({ q: 'filter', ownerId: shop.members.builder.id, sort: 'createdAt', order: 'asc' })).toEqual([b.body.scenario.id, c.body.scenario.id]);
  });

  it('returns 400 naming a sort or owner it cannot use', async () => {
    const response = await request(ctx.app).get('/api/scenarios?sort=boost&ownerId=someone').set(bearer(tokens.analyst));
    expect(response.status).toBe(400);
    expect(Object.keys(response.body.error.fields).sort()).toEqual(['ownerId', 'sort']);
  });
});

describe('DELETE /api/scenarios/:id', () => {
  it('deletes the scenario with its sweeps and audits what it was', async () => {
    const created = await createAs('engineer', { name: 'To delete' });
    const id = created.body.scenario.id;
    const sweep = await request(ctx.app)
      .post('/api/sweeps')
      .set(bearer(tokens.engineer))
      .send({ scenarioId: id, axes: [{ path: 'exhaust.ratio', values: [1.2, 1.5] }] });
    expect(sweep.status).toBe(201);
    const response = await request(ctx.app).delete(`/api/scenarios/${id}`).set(bearer(tokens.admin));
    expect(response.status).toBe(204);
    expect(await ctx.knex('scenarios').where({ id })).toHaveLength(0);
    expect(await ctx.knex('sweeps').where({ id: sweep.body.sweep.id })).toHaveLength(0);
    const audit = await ctx.knex('audit_log').where({ entity_id: id, action: 'delete' }).first();
    expect(audit).toMatchObject({ actor_id: shop.members.admin.id, entity_type: 'scenario' });
    expect(audit.changes.name).toEqual({ from: 'To delete' });
  });

  it("lets a builder delete their own scenario but not an engineer's", async () => {
    const own = await createAs('builder', { name: 'Builder deletes own' });
    expect((await request(ctx.app).delete(`/api/scenarios/${own.body.scenario.id}`).set(bearer(tokens.builder))).status).toBe(204);
    const other = await createAs('engineer', { name: 'Builder may not delete' });
    const refused = await request(ctx.app).delete(`/api/scenarios/${other.body.scenario.id}`).set(bearer(tokens.builder));
    expect(refused.status).toBe(403);
    expect(await ctx.knex('scenarios').where({ id: other.body.scenario.id })).toHaveLength(1);
  });
});
