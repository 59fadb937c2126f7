import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linkIn, waitForMail } from './helpers/caught-mail.ts';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { writeShareLink } from './helpers/fixtures-mail-sharing.ts';
import { createWorld, type World } from './helpers/world.ts';

let ctx: TestContext;
let world: World;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
const PUBLIC_URL = 'http://crackpoint.test:8080';

beforeAll(async () => {
  ctx = createTestContext({ PUBLIC_URL, SHARED_VIEW_LIMIT_PER_MINUTE: '1000' });
  world = await createWorld(ctx, 'share');
  shop = world.own;
  tokens = world.tokens.own;
});

afterAll(async () => {
  await world.close();
  await ctx.close();
});

async function staticSweepWithPoints(workspace: TestWorkspace): Promise<string> {
  const scenarioId = await world.scenario(workspace, 'engineer', 'Harrow Lane shared sweep');
  const sweepId = await world.sweep(workspace, scenarioId);
  await ctx.knex('sweeps').where({ id: sweepId }).update({ state: 'done', points_done: 4, finished_at: new Date() });
  await ctx.knex('sweep_points').insert(
    [0, 1, 2, 3].map((index) => ({
      sweep_id: sweepId,
      point_index: index,
      status: 'ok',
      crack_boost_pa: 50_000 + index * 1000,
      full_open_boost_pa: 60_000 + index * 1000,
    })),
  );
  return sweepId;
}

describe('share links', () => {
  it('shows a scenario read-only to the link holder, counting each visit, until revoked', async () => {
    const scenarioId = await world.scenario(shop, 'engineer', 'Harrow Lane street car');
    const created = await request(ctx.app)
      .post('/api/share-links')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ target: 'scenario', targetId: scenarioId, label: 'For the customer', expiresInDays: 3 });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const { token, url, shareLink } = created.body;
    expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    expect(url).toBe(`${PUBLIC_URL}/shared/${token}`);
    expect(shareLink).toMatchObject({ target: 'scenario', targetId: scenarioId, targetName: 'Harrow Lane street car', label: 'For the customer', status: 'active', useCount: 0 });
    const days = (Date.parse(shareLink.expiresAt) - Date.now()) / 86_400_000;
    expect(days).toBeGreaterThan(2.99);
    expect(days).toBeLessThan(3.01);
    const row = await ctx.knex('share_links').where({ id: shareLink.id }).first();
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);
    expect(JSON.stringify(row)).not.toContain(token);

    const seen = await request(ctx.app).get(`/api/shared/${token}`);
    expect(seen.status).toBe(200);
    expect(seen.body.share).toMatchObject({ target: 'scenario', label: 'For the customer', workspaceName: shop.name });
    expect(seen.body.scenario.name).toBe('Harrow Lane street car');
    expect(seen.body.scenario.balance.crack).toMatchObject({ status: 'opens' });
    expect(seen.body.scenario.balance.ratioSweep.length).toBeGreaterThan(2);
    expect(seen.body.sweep).toBeNull();
    await request(ctx.app).get(`/api/shared/${token}`).expect(200);
    const used = await ctx.knex('share_links').where({ id: shareLink.id }).first();
    expect(used.use_count).toBe(2);
    expect(used.last_used_at).not.toBeNull();

    const list = await request(ctx.app).get('/api/share-links').query({ targetId: scenarioId }).set('Authorization', `Bearer ${tokens.engineer}`);
    expect(list.body.items).toHaveLength(1);
    expect(list.body.items[0]).toMatchObject({ id: shareLink.id, useCount: 2, createdBy: 'Test analyst' });
    expect(JSON.stringify(list.body)).not.toContain(token);

    await request(ctx.app).delete(`/api/share-links/${shareLink.id}`).set('Authorization', `Bearer ${tokens.analyst}`).expect(204);
    const gone = await request(ctx.app).get(`/api/shared/${token}`);
    expect(gone.status).toBe(404);
    expect(gone.body.error.code).toBe('not_found');
    expect((await ctx.knex('share_links').where({ id: shareLink.id }).first()).use_count).toBe(2);
    const after = await request(ctx.app).get('/api/share-links').query({ targetId: scenarioId }).set('Authorization', `Bearer ${tokens.engineer}`);
    expect(after.body.items[0].status).toBe('revoked');
  });

  it('answers 404 for an expired link, a link never made and a code that is not one', async () => {
    const scenarioId = await world.scenario(shop, 'engineer');
    const expired = await writeShareLink(ctx.knex, shop, { scenarioId }, { expiresAt: new Date(Date.now() - 1000) });
    expect((await request(ctx.app).get(`/api/shared/${expired.token}`)).status).toBe(404);
    expect((await request(ctx.app).get(`/api/shared/${'B'.repeat(43)}`)).status).toBe(404);
    expect((await request(ctx.app).get(`/api/shared/not-a-code`)).status).toBe(404);
  });

  it("shows a sweep's axes, state and counts and its surface through the link", async () => {
    const sweepId = await staticSweepWithPoints(shop);
    const created = await request(ctx.app)
      .post('/api/share-links')
      .set('Authorization', `Bearer ${tokens.engineer}`)
      .send({ target: 'sweep', targetId: sweepId });
    expect(created.status).toBe(201);
    expect(created.body.shareLink.targetName).toBe('Harrow Lane shared sweep');
    const token = created.body.token as string;
    const seen = await request(ctx.app).get(`/api/shared/${token}`);
    expect(seen.body.sweep).toMatchObject({ scenarioName: 'Harrow Lane shared sweep', state: 'done', pointCount: 4, pointsDone: 4 });
    expect(seen.body.sweep.axes.map((a: { path: string }) => a.path)).toEqual(['springs.0.seatForceN', 'exhaust.ratio']);
    expect(seen.body.scenario).toBeNull();

    const surface = await request(ctx.app).get(`/api/shared/${token}/surface`).query({ metric: 'crackBoostPa', x: 1, y: 0 });
    expect(surface.status).toBe(200);
    expect(surface.body.z).toEqual([
      [50_000, 51_000],
      [52_000, 53_000],
    ]);
    const wrong = await request(ctx.app).get(`/api/shared/${token}/surface`).query({ metric: 'settledBoostPa' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.fields).toHaveProperty('metric');
  });

  it('e-mails a link to an address with the sender and the note', async () => {
    const scenarioId = await world.scenario(shop, 'engineer', 'Harrow Lane track car');
    const created = await request(ctx.app)
      .post('/api/share-links')
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ target: 'scenario', targetId: scenarioId });
    const email = `customer.${Date.now()}@test.example`;
    const sent = await request(ctx.app)
      .post(`/api/share-links/${created.body.shareLink.id}/send`)
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ token: created.body.token, email, note: 'The spring we talked about' });
    expect(sent.status, JSON.stringify(sent.body)).toBe(200);
    const mail = await waitForMail(email);
    expect(mail.subject).toContain('Test analyst shared a scenario');
    expect(mail.text).toContain('The spring we talked about');
    expect(mail.text).toContain('Harrow Lane track car');
    const link = linkIn(mail, `${PUBLIC_URL}/shared/`);
    expect(link).toBe(created.body.url);
    const opened = await request(ctx.app).get(`/api/shared/${link.split('/').pop()}`);
    expect(opened.body.scenario.name).toBe('Harrow Lane track car');

    const wrongCode = await request(ctx.app)
      .post(`/api/share-links/${created.body.shareLink.id}/send`)
      .set('Authorization', `Bearer ${tokens.analyst}`)
      .send({ token: 'C'.repeat(43), email });
    expect(wrongCode.status).toBe(400);
    expect(wrongCode.body.error.fields).toHaveProperty('token');
  });

  it("refuses builders, and another workspace's scenario like a missing one", async () => {
    const scenarioId = await world.scenario(shop, 'builder');
    const builder = await request(ctx.app).post('/api/share-links').set('Authorization', `Bearer ${tokens.builder}`).send({ target: 'scenario', targetId: scenarioId });
    expect(builder.status).toBe(403);
    const rival = await createWorkspace(ctx.knex, 'share-rival');
    try {
      const rivalTokens = await tokensFor(ctx.app, rival);
      const foreign = await request(ctx.app).post('/api/share-links').set('Authorization', `Bearer ${rivalTokens.admin}`).send({ target: 'scenario', targetId: scenarioId });
      expect(foreign.status).toBe(404);
      const asSweep = await request(ctx.app).post('/api/share-links').set('Authorization', `Bearer ${tokens.admin}`).send({ target: 'sweep', targetId: scenarioId });
      expect(asSweep.status).toBe(404);
    } finally {
      await deleteWorkspace(ctx.knex, rival);
    }
  });

  it('limits requests to shared links per client address', async () => {
    const limited = createTestContext({ SHARED_VIEW_LIMIT_PER_MINUTE: '3' });
    try {
      const { token } = await writeShareLink(ctx.knex, shop, { scenarioId: await world.scenario(shop, 'engineer') });
      const answers: number[] = [];
      for (let i = 0; i < 4; i += 1) answers.push((await request(limited.app).get(`/api/shared/${token}`)).status);
      expect(answers).toEqual([200, 200, 200, 429]);
    } finally {
      await limited.close();
    }
  });
});
