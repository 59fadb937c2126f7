import { Writable } from 'node:stream';
import { createApp } from '@crackpoint/api';
import bcrypt from 'bcryptjs';
import { pino } from 'pino';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, signIn, TEST_PASSWORD, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';

let ctx: TestContext;
let shop: TestWorkspace;
const registered: string[] = [];

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'account');
});

afterAll(async () => {
  const workspaces = await ctx.knex('users').whereIn('email', registered).pluck('workspace_id');
  await ctx.knex('workspaces').whereIn('id', workspaces).delete();
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const bearer = (token: string) => ({ Authorization: `Bearer ${token}` });
let serial = 0;
function newEmail(): string {
  const email = `owner.${Date.now()}.${serial++}@account.example`;
  registered.push(email);
  return email;
}
const registration = (overrides: Record<string, unknown> = {}) => ({
  workspaceName: 'Harrow Lane Boostworks Annex',
  displayName: 'Annex admin',
  email: newEmail(),
  password: 'spring seat and shaft',
  ...overrides,
});
const HASH = /\$2[aby]\$/;

/** A member of their own, so changing their password or signing them out leaves the others alone. */
async function freshMember(role = 'builder'): Promise<{ id: string; email: string; token: string }> {
  const email = `${role}.${Date.now()}.${serial++}@account.example`;
  const [row] = await ctx.knex('users')
    .insert({ workspace_id: shop.id, email, password_hash: await bcrypt.hash(TEST_PASSWORD, 4), display_name: 'Fresh', role })
    .returning<{ id: string }[]>('id');
  return { id: row!.id, email, token: await signIn(ctx.app, email) };
}

describe('POST /api/auth/register', () => {
  it('creates the workspace with its first member as admin, signed in, and never shows the hash', async () => {
    const body = registration({ unitSystem: 'metric' });
    const response = await request(ctx.app).post('/api/auth/register').send(body);
    expect(response.status).toBe(201);
    expect(response.body.user).toMatchObject({
      email: body.email,
      displayName: 'Annex admin',
      role: 'admin',
      unitSystem: 'metric',
      workspace: { name: 'Harrow Lane Boostworks Annex' },
    });
    expect(JSON.stringify(response.body)).not.toMatch(HASH);
    expect(JSON.stringify(response.body)).not.toContain(body.password);

    const user = await ctx.knex('users').where({ email: body.email }).first();
    expect(user.password_hash).toMatch(HASH);
    expect(user.password_hash).not.toContain(body.password);
    const workspace = await ctx.knex('workspaces').where({ id: user.workspace_id }).first();
    expect(workspace.slug).toMatch(/^harrow-lane-boostworks-annex-[0-9a-f]{6}$/);

    const me = await request(ctx.app).get('/api/me').set(bearer(response.body.token));
    expect(me.status).toBe(200);
    expect(me.body.user.id).toBe(user.id);
  });

  it('lower-cases the e-mail so the account signs in in any case', async () => {
    const email = newEmail();
    const response = await request(ctx.app).post('/api/auth/register').send(registration({ email: email.toUpperCase() }));
    expect(response.status).toBe(201);
    expect(response.body.user.email).toBe(email);
    expect((await request(ctx.app).post('/api/auth/sign-in').send({ email, password: 'spring seat and shaft' })).status).toBe(200);
  });

  it('returns 409 naming email when the e-mail is taken, and writes no workspace', async () => {
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app).post('/api/auth/register').send(registration({ email: shop.members.admin.email }));
    expect(response.status).toBe(409);
    expect(response.body.error).toMatchObject({ code: 'email_taken', fields: { email: 'is already registered' } });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it.each([
    ['is too short', 'nine char', 'must be at least 10 characters'],
    ['is one character repeated', 'aaaaaaaaaaaa', 'must not be one character repeated'],
    ['is longer than bcrypt reads', 'x'.repeat(73), 'must be at most 72 bytes (72 plain letters, fewer with accents or symbols)'],
  ])('returns 400 naming password when it %s', async (_case, password, message) => {
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app).post('/api/auth/register').send(registration({ password }));
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toEqual({ password: message });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('returns 400 naming password when it is the e-mail address or its name part', async () => {
    const email = newEmail();
    for (const password of [email, email.split('@')[0]!.toUpperCase()]) {
      const response = await request(ctx.app).post('/api/auth/register').send(registration({ email, password }));
      expect(response.status).toBe(400);
      expect(response.body.error.fields).toEqual({ password: 'must not be your e-mail address' });
    }
    expect(await ctx.knex('users').where({ email })).toHaveLength(0);
  });

  it('returns 400 naming every missing field at once', async () => {
    const response = await request(ctx.app).post('/api/auth/register').send({});
    expect(response.status).toBe(400);
    expect(Object.keys(response.body.error.fields).sort()).toEqual(['displayName', 'email', 'password', 'workspaceName']);
  });

  it('answers 429 after too many registrations from one address', async () => {
    const limited = createTestContext({ REGISTER_LIMIT_PER_HOUR: '2' });
    try {
      for (let i = 0; i < 2; i++) expect((await request(limited.app).post('/api/auth/register').send(registration())).status).toBe(201);
      const blocked = await request(limited.app).post('/api/auth/register').send(registration());
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('too_many_attempts');
    } finally {
      await limited.close();
    }
  });
});

describe('POST /api/auth/sign-out', () => {
  it('refuses the signed-out token from then on, while other sessions go on', async () => {
    const member = await freshMember();
    const other = await signIn(ctx.app, member.email);
    const out = await request(ctx.app).post('/api/auth/sign-out').set(bearer(member.token));
    expect(out.status).toBe(204);
    const after = await request(ctx.app).get('/api/me').set(bearer(member.token));
    expect(after.status).toBe(401);
    expect(after.body.error.code).toBe('invalid_token');
    expect((await request(ctx.app).get('/api/me').set(bearer(other))).status).toBe(200);
    expect(await ctx.knex('revoked_tokens').where({ user_id: member.id })).toHaveLength(1);
  });

  it('ends every session with everywhere: true', async () => {
    const member = await freshMember();
    const other = await signIn(ctx.app, member.email);
    const out = await request(ctx.app).post('/api/auth/sign-out').set(bearer(member.token)).send({ everywhere: true });
    expect(out.status).toBe(204);
    expect((await request(ctx.app).get('/api/me').set(bearer(member.token))).status).toBe(401);
    expect((await request(ctx.app).get('/api/me').set(bearer(other))).status).toBe(401);
    expect((await request(ctx.app).get('/api/me').set(bearer(await signIn(ctx.app, member.email)))).status).toBe(200);
  });

  it('forgets signed-out tokens once they would have expired anyway', async () => {
    const member = await freshMember();
    await ctx.knex('revoked_tokens').insert({ token_id: '00000000-0000-4000-8000-00000000dead', user_id: member.id, expires_at: new Date(Date.now() - 1000) });
    await request(ctx.app).post('/api/auth/sign-out').set(bearer(member.token));
    expect(await ctx.knex('revoked_tokens').where({ token_id: '00000000-0000-4000-8000-00000000dead' })).toHaveLength(0);
  });
});

describe('POST /api/auth/change-password', () => {
  it('changes the password, ends the other sessions and hands back a fresh token', async () => {
    const member = await freshMember();
    const other = await signIn(ctx.app, member.email);
    const response = await request(ctx.app)
      .post('/api/auth/change-password')
      .set(bearer(member.token))
      .send({ currentPassword: TEST_PASSWORD, newPassword: 'a brand new passphrase' });
    expect(response.status).toBe(200);
    expect(JSON.stringify(response.body)).not.toMatch(HASH);
    expect((await request(ctx.app).get('/api/me').set(bearer(response.body.token))).status).toBe(200);
    expect((await request(ctx.app).get('/api/me').set(bearer(member.token))).status).toBe(401);
    expect((await request(ctx.app).get('/api/me').set(bearer(other))).status).toBe(401);
    expect((await request(ctx.app).post('/api/auth/sign-in').send({ email: member.email, password: TEST_PASSWORD })).status).toBe(401);
    expect((await request(ctx.app).post('/api/auth/sign-in').send({ email: member.email, password: 'a brand new passphrase' })).status).toBe(200);
  });

  it('returns 422 naming currentPassword when it is wrong, and changes nothing', async () => {
    const member = await freshMember();
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app)
      .post('/api/auth/change-password')
      .set(bearer(member.token))
      .send({ currentPassword: 'not the password', newPassword: 'a brand new passphrase' });
    expect(response.status).toBe(422);
    expect(response.body.error).toMatchObject({ code: 'wrong_password', fields: { currentPassword: 'is not right' } });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
    expect((await request(ctx.app).get('/api/me').set(bearer(member.token))).status).toBe(200);
  });

  it.each([
    ['the e-mail address', (email: string) => email, 'must not be your e-mail address'],
    ['the current password', () => TEST_PASSWORD, 'must differ from the current password'],
    ['too short', () => 'tiny', 'must be at least 10 characters'],
  ])('returns 400 naming newPassword when it is %s', async (_case, pick, message) => {
    const member = await freshMember();
    const before = await dbFingerprint(ctx.knex);
    const response = await request(ctx.app)
      .post('/api/auth/change-password')
      .set(bearer(member.token))
      .send({ currentPassword: TEST_PASSWORD, newPassword: pick(member.email) });
    expect(response.status).toBe(400);
    expect(response.body.error.fields).toEqual({ newPassword: message });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('answers 429 after too many wrong current passwords', async () => {
    const limited = createTestContext({ CHANGE_PASSWORD_LIMIT_PER_15_MINUTES: '2' });
    try {
      const email = `limited.${Date.now()}@account.example`;
      await ctx.knex('users').insert({
        workspace_id: shop.id,
        email,
        password_hash: await bcrypt.hash(TEST_PASSWORD, 4),
        display_name: 'Limited',
        role: 'analyst',
      });
      const token = await signIn(limited.app, email);
      const attempt = (currentPassword: string) =>
        request(limited.app).post('/api/auth/change-password').set(bearer(token)).send({ currentPassword, newPassword: 'a brand new passphrase' });
      expect((await attempt('wrong one')).status).toBe(422);
      expect((await attempt('wrong two')).status).toBe(422);
      const blocked = await attempt(TEST_PASSWORD);
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('too_many_attempts');
    } finally {
      await limited.close();
    }
  });
});

describe('sign-in limits per address', () => {
  it('answers 429 after too many failures from one address over different accounts', async () => {
    const limited = createTestContext({ SIGN_IN_ADDRESS_LIMIT_PER_MINUTE: '3' });
    try {
      const attempt = (email: string) => request(limited.app).post('/api/auth/sign-in').send({ email, password: 'wrong guess' });
      expect((await attempt(shop.members.admin.email)).status).toBe(401);
      expect((await attempt(shop.members.engineer.email)).status).toBe(401);
      expect((await attempt(shop.members.builder.email)).status).toBe(401);
      const blocked = await request(limited.app).post('/api/auth/sign-in').send({ email: shop.members.analyst.email, password: TEST_PASSWORD });
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.message).toMatch(/from this address/);
    } finally {
      await limited.close();
    }
  });
});

describe('tokens', () => {
  it('are refused once the member has been moved to another workspace', async () => {
    const member = await freshMember();
    const elsewhere = await createWorkspace(ctx.knex, 'account-elsewhere');
    await ctx.knex('users').where({ id: member.id }).update({ workspace_id: elsewhere.id });
    expect((await request(ctx.app).get('/api/me').set(bearer(member.token))).status).toBe(401);
    await deleteWorkspace(ctx.knex, elsewhere);
  });
});

describe('account logs', () => {
  it('never hold a password or a hash', async () => {
    const lines: string[] = [];
    const sink = new Writable({
      write(chunk: Buffer, _encoding, done) {
        lines.push(chunk.toString());
        done();
      },
    });
    const app = createApp({ knex: ctx.knex, queue: ctx.queue, config: ctx.config, logger: pino({ level: 'trace' }, sink) });
    const body = registration({ password: 'log-proof passphrase' });
    const registeredResponse = await request(app).post('/api/auth/register').send(body);
    expect(registeredResponse.status).toBe(201);
    await request(app)
      .post('/api/auth/change-password')
      .set(bearer(registeredResponse.body.token))
      .send({ currentPassword: 'log-proof passphrase', newPassword: 'second log-proof passphrase' });
    await request(app).post('/api/auth/register').send(registration({ password: 'short' }));
    const log = lines.join('');
    expect(log).toContain('/api/auth/change-password');
    expect(log).not.toContain('log-proof passphrase');
    expect(log).not.toMatch(HASH);
  });
});
