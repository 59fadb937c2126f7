import { defaultScenario } from '@crackpoint/sim-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let rival: TestWorkspace;
let tokens: Record<Role, string>;
let rivalTokens: Record<Role, string>;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'library');
  rival = await createWorkspace(ctx.knex, 'library-rival');
  tokens = await tokensFor(ctx.app, shop);
  rivalTokens = await tokensFor(ctx.app, rival);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await deleteWorkspace(ctx.knex, rival);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
const seatSpring = (seatForceN: number, rateNPerM = 3500) => ({ from: 'seat', seatForceN, rateNPerM });

async function addSpring(name: string, data: unknown = seatSpring(129), token = tokens.engineer) {
  const response = await request(ctx.app).post('/api/library/springs').set(bearer(token)).send({ name, data });
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body.item as { id: string; name: string; version: number; data: Record<string, unknown> };
}

describe('library parts', () => {
  it('stores a spring as sim-core parses it, records who added it, and audits it in the same write', async () => {
    const response = await request(ctx.app)
      .post('/api/library/springs')
      .set(bearer(tokens.engineer))
      .send({ name: 'Yellow 7 psi', notes: 'From the bench, warm', data: { from: 'bench', benchCrackPressurePa: 48_263, rateNPerM: 3100 } });
    expect(response.status).toBe(201);
    expect(response.body.item).toMatchObject({
      name: 'Yellow 7 psi',
      notes: 'From the bench, warm',
      data: { from: 'bench', benchCrackPressurePa: 48_263, rateNPerM: 3100 },
      version: 1,
      archived: false,
      createdBy: shop.members.engineer.id,
    });
    const row = await ctx.knex('springs').where({ id: response.body.item.id }).first();
    expect(row).toMatchObject({ workspace_id: shop.id, name: 'Yellow 7 psi', created_by: shop.members.engineer.id });
    const audit = await ctx.knex('audit_log').where({ entity_id: row.id });
    expect(audit).toHaveLength(1);
    expect(audit[0]).toMatchObject({ workspace_id: shop.id, actor_id: shop.members.engineer.id, action: 'create', entity_type: 'spring' });
    expect(audit[0].changes.name).toEqual({ to: 'Yellow 7 psi' });
  });

  it('fills sim-core defaults into a wastegate and names a bad field by its path under data', async () => {
    const wastegate = defaultScenario().wastegate;
    const { movingMassKg: _left, ...withoutDefault } = wastegate;
    const good = await request(ctx.app).post('/api/library/wastegates').set(bearer(tokens.admin)).send({ name: '46 mm gate', data: withoutDefault });
    expect(good.status).toBe(201);
    expect(good.body.item.data.movingMassKg).toBe(0.15);

    const before = await dbFingerprint(ctx.knex);
    const bad = await request(ctx.app)
      .post('/api/library/wastegates')
      .set(bearer(tokens.admin))
      .send({ name: 'Bad gate', data: { ...wastegate, valveDiameterM: -0.04, colour: 'red' } });
    expect(bad.status).toBe(400);
    expect(bad.body.error.fields['data.valveDiameterM']).toMatch(/greater than 0/);
    expect(bad.body.error.fields['data.colour']).toBe('is not a known field');
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('refuses a second part of one kind with the same name in any letter case, naming name', async () => {
    await addSpring('Blue 10 psi');
    const response = await request(ctx.app).post('/api/library/springs').set(bearer(tokens.engineer)).send({ name: 'BLUE 10 PSI', data: seatSpring(150) });
    expect(response.status).toBe(409);
    expect(response.body.error).toMatchObject({ code: 'name_taken', fields: { name: 'is already the name of another spring' } });
    const other = await request(ctx.app).post('/api/library/springs').set(bearer(rivalTokens.engineer)).send({ name: 'Blue 10 psi', data: seatSpring(150) });
    expect(other.status).toBe(201);
  });

  it('returns 403 to builders and analysts for changes, while they read the library', async () => {
    const spring = await addSpring('Readable spring');
    for (const role of ['builder', 'analyst'] as const) {
      const create = await request(ctx.app).post('/api/library/springs').set(bearer(tokens[role])).send({ name: `By ${role}`, data: seatSpring(1) });
      expect(create.status).toBe(403);
      const read = await request(ctx.app).get(`/api/library/springs/${spring.id}`).set(bearer(tokens[role]));
      expect(read.status).toBe(200);
      expect(read.body.item.id).toBe(spring.id);
    }
  });
});

describe('GET /api/library/springs', () => {
  let ids: Record<string, string>;
  let listShop: { workspace: TestWorkspace; token: string };
  beforeAll(async () => {
    const lib = await createWorkspace(ctx.knex, 'library-list');
    const libTokens = await tokensFor(ctx.app, lib);
    listShop = { workspace: lib, token: libTokens.engineer };
    const add = async (name: string, data: unknown) =>
      (await request(ctx.app).post('/api/library/springs').set(bearer(libTokens.engineer)).send({ name, data })).body.item.id as string;
    ids = {
      soft: await add('Soft inner', seatSpring(60, 2000)),
      mid: await add('Mid outer', seatSpring(129, 3500)),
      stiff: await add('Stiff outer', seatSpring(220, 6000)),
      bench: await add('Bench 100% tested_', { from: 'bench', benchCrackPressurePa: 70_000, rateNPerM: 4000 }),
    };
    const archived = await add('Old stiff', seatSpring(300));
    await request(ctx.app).patch(`/api/library/springs/${archived}`).set(bearer(libTokens.engineer)).send({ archived: true, version: 1 });
    ids.archived = archived;
  });
  afterAll(async () => {
    await deleteWorkspace(ctx.knex, listShop.workspace);
  });

  const list = async (query: Record<string, string | number>) => {
    const response = await request(ctx.app).get('/api/library/springs').query(query).set(bearer(listShop.token));
    expect(response.status, JSON.stringify(response.body)).toBe(200);
    return { ids: (response.body.items as { id: string }[]).map((item) => item.id), total: response.body.total as number };
  };

  it('lists parts in use by name, leaving archived ones out', async () => {
    expect(await list({})).toEqual({ ids: [ids.bench, ids.mid, ids.soft, ids.stiff], total: 4 });
  });

  it('filters by part of the name, taking % and _ as letters', async () => {
    expect((await list({ q: 'OUTER' })).ids).toEqual([ids.mid, ids.stiff]);
    expect((await list({ q: '100%' })).ids).toEqual([ids.bench]);
    expect((await list({ q: 'h_' })).ids).toEqual([]);
  });

  it('filters by how the spring is given and by archived state', async () => {
    expect((await list({ kind: 'bench' })).ids).toEqual([ids.bench]);
    expect((await list({ archived: 'true' })).ids).toEqual([ids.archived]);
    expect((await list({ archived: 'all' })).total).toBe(5);
  });

  it('sorts by a number of the part, parts without it last', async () => {
    expect((await list({ sort: 'seatForceN', order: 'desc' })).ids).toEqual([ids.stiff, ids.mid, ids.soft, ids.bench]);
    expect((await list({ sort: 'rateNPerM' })).ids).toEqual([ids.soft, ids.mid, ids.bench, ids.stiff]);
  });

  it('pages with limit and offset and gives the total of the filter', async () => {
    expect(await list({ limit: 2, offset: 1 })).toEqual({ ids: [ids.mid, ids.soft], total: 4 });
  });

  it('returns 400 naming a sort, filter or page it does not know', async () => {
    const response = await request(ctx.app).get('/api/library/springs?sort=colour&kind=coil&limit=0&archived=maybe').set(bearer(listShop.token));
    expect(response.status).toBe(400);
    expect(Object.keys(response.body.error.fields).sort()).toEqual(['archived', 'kind', 'limit', 'sort']);
  });

  it('never shows another workspace a part', async () => {
    const response = await request(ctx.app).get('/api/library/springs?archived=all&limit=200').set(bearer(tokens.admin));
    for (const id of Object.values(ids)) expect(response.text).not.toContain(id);
  });
});

describe('PATCH /api/library/:kind/:id', () => {
  it('changes a part with its version, audits field by field, and refuses a stale version', async () => {
    const spring = await addSpring('Patched spring', seatSpring(129));
    const url = `/api/library/springs/${spring.id}`;
    const changed = await request(ctx.app).patch(url).set(bearer(tokens.engineer)).send({ data: seatSpring(140), version: 1 });
    expect(changed.status).toBe(200);
    expect(changed.body.item).toMatchObject({ version: 2, data: { seatForceN: 140 } });
    const stale = await request(ctx.app).patch(url).set(bearer(tokens.admin)).send({ name: 'Late', version: 1 });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe('version_conflict');
    expect((await ctx.knex('springs').where({ id: spring.id }).first()).name).toBe('Patched spring');
    const audit = await ctx.knex('audit_log').where({ entity_id: spring.id, action: 'update' }).first();
    expect(audit.changes).toEqual({ 'data.seatForceN': { from: 129, to: 140 } });
    expect(audit.actor_id).toBe(shop.members.engineer.id);
  });

  it('archives and brings back a part', async () => {
    const spring = await addSpring('Archived then back');
    const url = `/api/library/springs/${spring.id}`;
    const archived = await request(ctx.app).patch(url).set(bearer(tokens.engineer)).send({ archived: true, version: 1 });
    expect(archived.body.item).toMatchObject({ archived: true, version: 2 });
    expect(archived.body.item.archivedAt).not.toBeNull();
    const back = await request(ctx.app).patch(url).set(bearer(tokens.engineer)).send({ archived: false, version: 2 });
    expect(back.body.item).toMatchObject({ archived: false, archivedAt: null });
    const actions = await ctx.knex('audit_log').where({ entity_id: spring.id }).orderBy('created_at').pluck('action');
    expect(actions).toEqual(['create', 'archive', 'unarchive']);
  });

  it("returns 404 for another workspace's part, exactly like a missing one", async () => {
    const spring = await addSpring('Not for rivals');
    const foreign = await request(ctx.app).patch(`/api/library/springs/${spring.id}`).set(bearer(rivalTokens.admin)).send({ name: 'Taken', version: 1 });
    const missing = await request(ctx.app)
      .patch('/api/library/springs/00000000-0000-4000-8000-000000000000')
      .set(bearer(rivalTokens.admin))
      .send({ name: 'Taken', version: 1 });
    expect(foreign.status).toBe(404);
    expect(foreign.body).toEqual(missing.body);
    expect(foreign.body.error.message).toBe('Spring was not found.');
  });
});

describe('scenarios built from the library', () => {
  it('takes each named part into its section and remembers where it came from', async () => {
    const outer = await addSpring('Outer for build', seatSpring(100, 3000));
    const inner = await addSpring('Inner for build', seatSpring(40, 1000));
    const engine = defaultScenario().engine;
    const engineResponse = await request(ctx.app)
      .post('/api/library/engines')
      .set(bearer(tokens.engineer))
      .send({ name: '2.5 L five', data: { ...engine, displacementM3: 0.0025 } });
    const created = await request(ctx.app)
      .post('/api/scenarios')
      .set(bearer(tokens.builder))
      .send({ name: 'Built from parts', sources: { springIds: [outer.id, inner.id], engineId: engineResponse.body.item.id } });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const scenario = created.body.scenario;
    expect(scenario.data.springs).toEqual([seatSpring(100, 3000), seatSpring(40, 1000)]);
    expect(scenario.data.engine.displacementM3).toBe(0.0025);
    expect(scenario.sources).toEqual({ engineId: engineResponse.body.item.id, turboId: null, wastegateId: null, springIds: [outer.id, inner.id], supplyId: null });
    const read = await request(ctx.app).get(`/api/scenarios/${scenario.id}`).set(bearer(tokens.analyst));
    expect(read.body.scenario.sources).toEqual(scenario.sources);
  });

  it('returns 422 naming the field for a part of another workspace, exactly as for a missing one, and writes nothing', async () => {
    const theirs = (await request(ctx.app).post('/api/library/springs').set(bearer(rivalTokens.engineer)).send({ name: 'Rival only', data: seatSpring(90) })).body.item;
    const before = await dbFingerprint(ctx.knex);
    const foreign = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'Borrowing', sources: { springIds: [theirs.id] } });
    const missing = await request(ctx.app)
      .post('/api/scenarios')
      .set(bearer(tokens.engineer))
      .send({ name: 'Borrowing', sources: { springIds: ['00000000-0000-4000-8000-000000000000'] } });
    expect(foreign.status).toBe(422);
    expect(foreign.body).toEqual(missing.body);
    expect(foreign.body.error.fields).toEqual({ 'sources.springIds.0': "is not a spring of this workspace's library" });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('refuses an archived part as a new source', async () => {
    const spring = await addSpring('Retired spring');
    await request(ctx.app).patch(`/api/library/springs/${spring.id}`).set(bearer(tokens.engineer)).send({ archived: true, version: 1 });
    const response = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'From retired', sources: { springIds: [spring.id] } });
    expect(response.status).toBe(422);
    expect(response.body.error.fields['sources.springIds.0']).toMatch(/archived/);
  });

  it('refuses to delete a part in use with 409 naming the scenarios, and deletes it once unused', async () => {
    const spring = await addSpring('In use spring');
    const a = (await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'User A', sources: { springIds: [spring.id] } })).body.scenario;
    await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'User B', sources: { springIds: [spring.id, spring.id] } });
    const before = await dbFingerprint(ctx.knex);
    const refused = await request(ctx.app).delete(`/api/library/springs/${spring.id}`).set(bearer(tokens.engineer));
    expect(refused.status).toBe(409);
    expect(refused.body.error.code).toBe('in_use');
    expect(refused.body.error.message).toContain('2 scenarios: "User A", "User B"');
    expect(await dbFingerprint(ctx.knex)).toEqual(before);

    const unlinkA = await request(ctx.app).patch(`/api/scenarios/${a.id}`).set(bearer(tokens.engineer)).send({ sources: { springIds: [] }, version: 1 });
    expect(unlinkA.status).toBe(200);
    expect(unlinkA.body.scenario.sources.springIds).toEqual([]);
    expect(unlinkA.body.scenario.data.springs).toEqual([seatSpring(129)]);
    const stillB = await request(ctx.app).delete(`/api/library/springs/${spring.id}`).set(bearer(tokens.engineer));
    expect(stillB.status).toBe(409);
    expect(stillB.body.error.message).toContain('the scenario "User B"');
  });

  it('deletes an unused part and audits what it was', async () => {
    const spring = await addSpring('Unused spring');
    const response = await request(ctx.app).delete(`/api/library/springs/${spring.id}`).set(bearer(tokens.admin));
    expect(response.status).toBe(204);
    expect(await ctx.knex('springs').where({ id: spring.id })).toHaveLength(0);
    const audit = await ctx.knex('audit_log').where({ entity_id: spring.id, action: 'delete' }).first();
    expect(audit.changes.name).toEqual({ from: 'Unused spring' });
    expect(audit.actor_id).toBe(shop.members.admin.id);
  });

  it('keeps the database refusing a part of another workspace even past the API', async () => {
    const theirs = (await request(ctx.app).post('/api/library/engines').set(bearer(rivalTokens.engineer)).send({ name: 'Rival engine', data: defaultScenario().engine })).body.item;
    const mine = await ctx.knex('scenarios').where({ workspace_id: shop.id }).first('id');
    await expect(ctx.knex('scenarios').where({ id: mine.id }).update({ engine_id: theirs.id })).rejects.toThrow(/foreign key/);
  });

  it('lets a whole workspace go with its parts and the scenarios built from them', async () => {
    const gone = await createWorkspace(ctx.knex, 'library-gone');
    const goneTokens = await tokensFor(ctx.app, gone);
    const spring = (await request(ctx.app).post('/api/library/springs').set(bearer(goneTokens.engineer)).send({ name: 'Going', data: seatSpring(1) })).body.item;
    const built = await request(ctx.app).post('/api/scenarios').set(bearer(goneTokens.engineer)).send({ name: 'Going too', sources: { springIds: [spring.id] } });
    expect(built.status).toBe(201);
    await deleteWorkspace(ctx.knex, gone);
    expect(await ctx.knex('springs').where({ id: spring.id })).toHaveLength(0);
    expect(await ctx.knex('scenarios').where({ id: built.body.scenario.id })).toHaveLength(0);
  });
});

describe('audit and transactions', () => {
  it('writes nothing of a change when its audit entry cannot be written', async () => {
    // A trigger that fails the audit insert for one marked name only, so other files are unaffected.
    await ctx.knex.raw(`
      create or replace function audit_refuse_marked() returns trigger language plpgsql as $$
      begin
        if new.changes::text like '%refuse-this-audit%' then raise exception 'audit refused'; end if;
        return new;
      end $$;
      create trigger audit_refuse_marked before insert on audit_log for each row execute function audit_refuse_marked();
    `);
    try {
      const before = await dbFingerprint(ctx.knex);
      const response = await request(ctx.app).post('/api/library/springs').set(bearer(tokens.engineer)).send({ name: 'refuse-this-audit', data: seatSpring(5) });
      expect(response.status).toBe(500);
      expect(response.body).toEqual({ error: { code: 'internal', message: 'Something went wrong on our side. Please try again.' } });
      const scenario = await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'refuse-this-audit' });
      expect(scenario.status).toBe(500);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    } finally {
      await ctx.knex.raw('drop trigger if exists audit_refuse_marked on audit_log; drop function if exists audit_refuse_marked();');
    }
  });

  it('records a scenario edit field by field with who made it', async () => {
    const created = (await request(ctx.app).post('/api/scenarios').set(bearer(tokens.engineer)).send({ name: 'Audited edit' })).body.scenario;
    const data = defaultScenario();
    data.exhaust.ratio = 1.8;
    await request(ctx.app).patch(`/api/scenarios/${created.id}`).set(bearer(tokens.admin)).send({ name: 'Audited edit 2', data, version: 1 });
    const audit = await ctx.knex('audit_log').where({ entity_id: created.id, action: 'update' }).first();
    expect(audit.actor_id).toBe(shop.members.admin.id);
    expect(audit.changes).toEqual({ name: { from: 'Audited edit', to: 'Audited edit 2' }, 'data.exhaust.ratio': { from: 1.5, to: 1.8 } });
  });
});
