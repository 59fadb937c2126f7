import { createKnex, deliverSweepNotices } from '@crackpoint/api';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linkIn, mailTo, waitForMail } from './helpers/caught-mail.ts';
import { createTestContext, type TestContext } from './helpers/context.ts';
import { createWorld, type World } from './helpers/world.ts';

let ctx: TestContext;
let world: World;
const PUBLIC_URL = 'http://crackpoint.test:8080';

beforeAll(async () => {
  ctx = createTestContext({ PUBLIC_URL });
  world = await createWorld(ctx, 'notice');
});

afterAll(async () => {
  await world.close();
  await ctx.close();
});

/** A sweep by a member of its own (their e-mail address is this test's alone), finished a moment ago. */
async function finishedSweepOf(memberId: string, state: 'done' | 'failed' | 'cancelled' = 'done'): Promise<string> {
  const scenarioId = await world.scenario(world.own, 'engineer', 'Harrow Lane sweep notice');
  const sweepId = await world.sweep(world.own, scenarioId);
  await ctx.knex('sweeps').where({ id: sweepId }).update({ created_by: memberId, state, points_done: 4, finished_at: new Date() });
  return sweepId;
}

async function optIn(token: string, on: boolean) {
  return request(ctx.app).patch('/api/me/notifications').set('Authorization', `Bearer ${token}`).send({ sweepFinished: on });
}

describe('"your sweep finished" e-mails', () => {
  it('are off until the member asks for them', async () => {
    const member = await world.member(world.own, 'engineer');
    const shown = await request(ctx.app).get('/api/me/notifications').set('Authorization', `Bearer ${member.token}`);
    expect(shown.body).toEqual({ notifications: { sweepFinished: false } });
    const sweepId = await finishedSweepOf(member.id);
    await deliverSweepNotices(ctx.knex, ctx.config);
    expect(await mailTo(member.email)).toEqual([]);
    expect((await ctx.knex('sweeps').where({ id: sweepId }).first()).finish_noticed_at).toBeNull();
  });

  it('are sent exactly once for a finished sweep, even with two API processes at the same time', async () => {
    const member = await world.member(world.own, 'engineer');
    const switched = await optIn(member.token, true);
    expect(switched.body).toEqual({ notifications: { sweepFinished: true } });
    // A sweep that finished before the member opted in is not mailed after the fact.
    const before = await finishedSweepOf(member.id);
    await ctx.knex('sweeps').where({ id: before }).update({ finished_at: new Date(Date.now() - 3_600_000) });
    const sweepId = await finishedSweepOf(member.id);
    const cancelled = await finishedSweepOf(member.id, 'cancelled');

    // Another process is another pool of connections to the same database.
    const otherKnex = createKnex(ctx.config.databaseUrl);
    try {
      const counts = await Promise.all([
        deliverSweepNotices(ctx.knex, ctx.config),
        deliverSweepNotices(otherKnex, ctx.config),
        deliverSweepNotices(ctx.knex, ctx.config),
        deliverSweepNotices(otherKnex, ctx.config),
      ]);
      expect(counts.reduce((a, b) => a + b, 0)).toBeGreaterThanOrEqual(1);
    } finally {
      await otherKnex.destroy();
    }
    await deliverSweepNotices(ctx.knex, ctx.config);

    const mail = await waitForMail(member.email);
    await new Promise((resolve) => setTimeout(resolve, 300));
    const all = await mailTo(member.email);
    expect(all).toHaveLength(1);
    expect(mail.subject).toBe('Your sweep of "Harrow Lane sweep notice" is finished');
    expect(mail.text).toContain('4 points');
    expect(linkIn(mail, `${PUBLIC_URL}/scenarios/`)).toMatch(/\/scenarios\/[0-9a-f-]{36}$/);
    expect(mail.html).toContain('Open the scenario');
    const rows = await ctx.knex('sweeps').whereIn('id', [before, sweepId, cancelled]).select('id', 'finish_noticed_at');
    const marked = Object.fromEntries(rows.map((r: { id: string; finish_noticed_at: Date | null }) => [r.id, r.finish_noticed_at !== null]));
    expect(marked).toEqual({ [before]: false, [sweepId]: true, [cancelled]: false });
  });

  it('say so when a sweep failed, and stop when the member switches them off', async () => {
    const member = await world.member(world.own, 'builder');
    await optIn(member.token, true);
    await finishedSweepOf(member.id, 'failed');
    await deliverSweepNotices(ctx.knex, ctx.config);
    const mail = await waitForMail(member.email);
    expect(mail.subject).toContain('stopped with a failure');

    expect((await optIn(member.token, false)).body).toEqual({ notifications: { sweepFinished: false } });
    await finishedSweepOf(member.id);
    await deliverSweepNotices(ctx.knex, ctx.config);
    expect(await mailTo(member.email)).toHaveLength(1);
  });

  it('stay in the outbox while the mail server is down and go out once it is back', async () => {
    const member = await world.member(world.own, 'engineer');
    await optIn(member.token, true);
    const sweepId = await finishedSweepOf(member.id);
    const offline = createTestContext({ SMTP_URL: 'smtp://127.0.0.1:9' });
    try {
      await expect(deliverSweepNotices(offline.knex, offline.config)).rejects.toThrow();
    } finally {
      await offline.close();
    }
    expect((await ctx.knex('sweeps').where({ id: sweepId }).first()).finish_noticed_at).toBeNull();
    await deliverSweepNotices(ctx.knex, ctx.config);
    await waitForMail(member.email);
    expect((await ctx.knex('sweeps').where({ id: sweepId }).first()).finish_noticed_at).not.toBeNull();
  });
});
