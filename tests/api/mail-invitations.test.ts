import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linkIn, waitForMail } from './helpers/caught-mail.ts';
import { createTestContext, createWorkspace, deleteWorkspace, signIn, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { writeInvitation } from './helpers/fixtures-mail-sharing.ts';

let ctx: TestContext;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
const PUBLIC_URL = 'http://crackpoint.test:8080';

beforeAll(async () => {
  ctx = createTestContext({ PUBLIC_URL });
  shop = await createWorkspace(ctx.knex, 'invite');
  tokens = await tokensFor(ctx.app, shop);
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const address = (name: string) => `${name}.${Math.random().toString(36).slice(2, 8)}@test.example`;
const tokenOf = (link: string) => link.split('/').pop() ?? '';

describe('invitations by e-mail', () => {
  it('e-mails a link that shows the invitation and signs the new member in when accepted', async () => {
    const email = address('new.engineer');
    const created = await request(ctx.app).post('/api/invitations').set('Authorization', `Bearer ${tokens.admin}`).send({ email, role: 'engineer' });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    expect(created.body.invitation).toMatchObject({ email, role: 'engineer', status: 'open', invitedBy: 'Test admin' });
    expect(JSON.stringify(created.body)).not.toMatch(/token/i);

    const mail = await waitForMail(email);
    expect(mail.subject).toContain(shop.name);
    expect(mail.text).toContain('as an engineer');
    expect(mail.html).toContain('Accept the invitation');
    const link = linkIn(mail, `${PUBLIC_URL}/invitations/`);
    expect(mail.html).toContain(link);
    const token = tokenOf(link);
    // 32 random bytes in base64url: 256 bits; the database holds only the SHA-256 of it.
    expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
    const row = await ctx.knex('invitations').where({ email }).first();
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);
    expect(row.token_hash).not.toContain(token);

    const preview = await request(ctx.app).get(`/api/invitations/${token}`);
    expect(preview.status).toBe(200);
    expect(preview.body.invitation).toMatchObject({ workspaceName: shop.name, email, role: 'engineer' });

    const accepted = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ displayName: 'Wren Okafor', password: 'spring seat forty two' });
    expect(accepted.status, JSON.stringify(accepted.body)).toBe(201);
    expect(accepted.body.user).toMatchObject({ email, displayName: 'Wren Okafor', role: 'engineer', workspace: { id: shop.id } });
    const me = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${accepted.body.token}`);
    expect(me.status).toBe(200);
    expect(await signIn(ctx.app, email, 'spring seat forty two')).toBeTruthy();

    const audit = await ctx.knex('audit_log').where({ workspace_id: shop.id }).whereIn('action', ['invite', 'accept_invitation']).pluck('action');
    expect(audit).toEqual(expect.arrayContaining(['invite', 'accept_invitation']));

    // Used once: the link is gone for a second person.
    expect((await request(ctx.app).get(`/api/invitations/${token}`)).status).toBe(404);
    const again = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ displayName: 'Someone else', password: 'another long secret' });
    expect(again.status).toBe(404);
    const list = await request(ctx.app).get('/api/invitations').set('Authorization', `Bearer ${tokens.admin}`);
    expect(list.body.items.find((i: { email: string }) => i.email === email)?.status).toBe('accepted');
  });

  it('answers 404 for a revoked or expired invitation link', async () => {
    const email = address('revoked');
    await request(ctx.app).post('/api/invitations').set('Authorization', `Bearer ${tokens.admin}`).send({ email, role: 'analyst' }).expect(201);
    const token = tokenOf(linkIn(await waitForMail(email), `${PUBLIC_URL}/invitations/`));
    const [{ id }] = await ctx.knex('invitations').where({ email }).select('id');
    await request(ctx.app).delete(`/api/invitations/${id}`).set('Authorization', `Bearer ${tokens.admin}`).expect(204);
    expect((await request(ctx.app).get(`/api/invitations/${token}`)).status).toBe(404);
    const accept = await request(ctx.app).post(`/api/invitations/${token}/accept`).send({ displayName: 'Late', password: 'a long enough secret' });
    expect(accept.status).toBe(404);
    expect(await ctx.knex('users').where({ email }).first()).toBeUndefined();

    const expired = await writeInvitation(ctx.knex, shop, { expiresAt: new Date(Date.now() - 1000) });
    expect((await request(ctx.app).get(`/api/invitations/${expired.token}`)).status).toBe(404);
  });

  it('refuses to invite an address that already has an account, naming the field', async () => {
    const response = await request(ctx.app)
      .post('/api/invitations')
      .set('Authorization', `Bearer ${tokens.admin}`)
      .send({ email: shop.members.builder.email, role: 'builder' });
    expect(response.status).toBe(409);
    expect(response.body.error.fields).toHaveProperty('email');
  });

  it('replaces an open invitation to the same address: only the newest link works', async () => {
    const email = address('twice');
    for (let i = 0; i < 2; i += 1) {
      await request(ctx.app).post('/api/invitations').set('Authorization', `Bearer ${tokens.admin}`).send({ email, role: 'builder' }).expect(201);
    }
    const first = tokenOf(linkIn(await waitForMail(email, 1), `${PUBLIC_URL}/invitations/`));
    const second = tokenOf(linkIn(await waitForMail(email, 2), `${PUBLIC_URL}/invitations/`));
    expect((await request(ctx.app).get(`/api/invitations/${first}`)).status).toBe(404);
    expect((await request(ctx.app).get(`/api/invitations/${second}`)).status).toBe(200);
  });

  it('keeps the invitation out of the database when the mail server is unreachable', async () => {
    const offline = createTestContext({ SMTP_URL: 'smtp://127.0.0.1:9' });
    try {
      const email = address('unsent');
      const response = await request(offline.app).post('/api/invitations').set('Authorization', `Bearer ${tokens.admin}`).send({ email, role: 'builder' });
      expect(response.status).toBe(503);
      expect(response.body.error.code).toBe('mail_unavailable');
      expect(await ctx.knex('invitations').where({ email }).first()).toBeUndefined();
    } finally {
      await offline.close();
    }
  });
});

describe('members and roles', () => {
  it('lists the members to an admin and changes a role with an audit row', async () => {
    const list = await request(ctx.app).get('/api/members').set('Authorization', `Bearer ${tokens.admin}`);
    expect(list.status).toBe(200);
    expect(list.body.items.map((m: { email: string }) => m.email)).toEqual(expect.arrayContaining(Object.values(shop.members).map((m) => m.email)));

    const changed = await request(ctx.app)
      .patch(`/api/members/${shop.members.analyst.id}`)
      .set('Authorization', `Bearer ${tokens.admin}`)
      .send({ role: 'engineer' });
    expect(changed.status).toBe(200);
    expect(changed.body.member.role).toBe('engineer');
    const audit = await ctx.knex('audit_log').where({ entity_id: shop.members.analyst.id, action: 'change_role' }).first();
    expect(audit.changes).toEqual({ role: { from: 'analyst', to: 'engineer' } });
    // The role is read on every request: the member's existing token already carries the new one.
    const me = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${tokens.analyst}`);
    expect(me.body.user.role).toBe('engineer');
    await request(ctx.app).patch(`/api/members/${shop.members.analyst.id}`).set('Authorization', `Bearer ${tokens.admin}`).send({ role: 'analyst' }).expect(200);
  });

  it('refuses to demote the last admin', async () => {
    const response = await request(ctx.app)
      .patch(`/api/members/${shop.members.admin.id}`)
      .set('Authorization', `Bearer ${tokens.admin}`)
      .send({ role: 'engineer' });
    expect(response.status).toBe(409);
    expect(response.body.error.code).toBe('last_admin');
    expect(response.body.error.fields).toHaveProperty('role');
    expect((await ctx.knex('users').where({ id: shop.members.admin.id }).first()).role).toBe('admin');
  });

  it('lets one of two admins step down, then not the other', async () => {
    await request(ctx.app).patch(`/api/members/${shop.members.engineer.id}`).set('Authorization', `Bearer ${tokens.admin}`).send({ role: 'admin' }).expect(200);
    await request(ctx.app).patch(`/api/members/${shop.members.admin.id}`).set('Authorization', `Bearer ${tokens.engineer}`).send({ role: 'engineer' }).expect(200);
    const last = await request(ctx.app)
      .patch(`/api/members/${shop.members.engineer.id}`)
      .set('Authorization', `Bearer ${tokens.engineer}`)
      .send({ role: 'builder' });
    expect(last.status).toBe(409);
    await request(ctx.app).patch(`/api/members/${shop.members.admin.id}`).set('Authorization', `Bearer ${tokens.engineer}`).send({ role: 'admin' }).expect(200);
    await request(ctx.app).patch(`/api/members/${shop.members.engineer.id}`).set('Authorization', `Bearer ${tokens.admin}`).send({ role: 'engineer' }).expect(200);
  });
});
