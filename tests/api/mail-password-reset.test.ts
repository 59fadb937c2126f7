import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { linkIn, mailTo, waitForMail } from './helpers/caught-mail.ts';
import { createTestContext, createWorkspace, deleteWorkspace, signIn, TEST_PASSWORD, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { writePasswordReset } from './helpers/fixtures-mail-sharing.ts';

let ctx: TestContext;
let shop: TestWorkspace;
const PUBLIC_URL = 'http://crackpoint.test:8080';

beforeAll(async () => {
  ctx = createTestContext({ PUBLIC_URL, PASSWORD_RESET_LIMIT_PER_HOUR: '8' });
  shop = await createWorkspace(ctx.knex, 'reset');
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const tokenOf = (link: string) => link.split('/').pop() ?? '';

describe('password reset by e-mail', () => {
  it('e-mails a single-use link, sets the new password and ends the sessions from before', async () => {
    const { email } = shop.members.builder;
    const oldSession = await signIn(ctx.app, email);

    const asked = await request(ctx.app).post('/api/auth/password-reset').send({ email: email.toUpperCase() });
    expect(asked.status).toBe(202);
    const mail = await waitForMail(email);
    expect(mail.subject).toBe('Set a new Crackpoint password');
    expect(mail.html).toContain('Set a new password');
    const token = tokenOf(linkIn(mail, `${PUBLIC_URL}/reset-password/`));
    const stored = await ctx.knex('password_resets').join('users', 'users.id', 'password_resets.user_id').where('users.email', email).first('token_hash');
    expect(stored.token_hash).not.toBe(token);

    const done = await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token, newPassword: 'new gate new spring' });
    expect(done.status, JSON.stringify(done.body)).toBe(200);
    expect(done.body.user.email).toBe(email);
    expect((await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${done.body.token}`)).status).toBe(200);
    expect((await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${oldSession}`)).status).toBe(401);
    expect((await request(ctx.app).post('/api/auth/sign-in').send({ email, password: TEST_PASSWORD })).status).toBe(401);
    expect(await signIn(ctx.app, email, 'new gate new spring')).toBeTruthy();
    expect(await ctx.knex('audit_log').where({ entity_id: shop.members.builder.id, action: 'reset_password' }).first()).toBeDefined();

    const reused = await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token, newPassword: 'yet another secret' });
    expect(reused.status).toBe(410);
    expect(reused.body.error.code).toBe('reset_link_used');
    expect(await signIn(ctx.app, email, 'new gate new spring')).toBeTruthy();
  });

  it('answers the same 202 for an address with no account and sends nothing', async () => {
    const nobody = `nobody.${Date.now()}@test.example`;
    const known = await request(ctx.app).post('/api/auth/password-reset').send({ email: shop.members.analyst.email });
    const unknown = await request(ctx.app).post('/api/auth/password-reset').send({ email: nobody });
    expect(unknown.status).toBe(202);
    expect(unknown.body).toEqual(known.body);
    await waitForMail(shop.members.analyst.email);
    expect(await mailTo(nobody)).toEqual([]);
  });

  it('makes older links void when a newer one is sent', async () => {
    const { email } = shop.members.engineer;
    await request(ctx.app).post('/api/auth/password-reset').send({ email }).expect(202);
    const first = tokenOf(linkIn(await waitForMail(email, 1), `${PUBLIC_URL}/reset-password/`));
    await request(ctx.app).post('/api/auth/password-reset').send({ email }).expect(202);
    const second = tokenOf(linkIn(await waitForMail(email, 2), `${PUBLIC_URL}/reset-password/`));
    expect((await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token: first, newPassword: 'first link secret' })).status).toBe(410);
    expect((await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token: second, newPassword: 'second link secret' })).status).toBe(200);
  });

  it('refuses an expired link and an unknown one, changing nothing', async () => {
    const expired = await writePasswordReset(ctx.knex, shop.members.admin.id, { expiresAt: new Date(Date.now() - 1000) });
    const late = await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token: expired, newPassword: 'too late a secret' });
    expect(late.status).toBe(410);
    expect(late.body.error.code).toBe('reset_link_expired');
    const unknown = await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token: 'A'.repeat(43), newPassword: 'unknown link secret' });
    expect(unknown.status).toBe(404);
    expect(await signIn(ctx.app, shop.members.admin.email)).toBeTruthy();
  });

  it('names the field of a code that cannot be one and of a weak password', async () => {
    const bad = await request(ctx.app).post('/api/auth/password-reset/confirm').send({ token: 'short', newPassword: 'x' });
    expect(bad.status).toBe(400);
    expect(Object.keys(bad.body.error.fields).sort()).toEqual(['newPassword', 'token']);
  });

  it('limits reset e-mails per address (the account) and per client address', async () => {
    const limited = createTestContext({ PUBLIC_URL, PASSWORD_RESET_LIMIT_PER_HOUR: '1000' });
    try {
      const email = `flood.${Date.now()}@test.example`;
      const answers: number[] = [];
      for (let i = 0; i < 6; i += 1) answers.push((await request(limited.app).post('/api/auth/password-reset').send({ email })).status);
      expect(answers).toEqual([202, 202, 202, 202, 202, 429]);
    } finally {
      await limited.close();
    }
    const perClient: number[] = [];
    for (let i = 0; i < 5; i += 1) {
      perClient.push((await request(ctx.app).post('/api/auth/password-reset').send({ email: `spray.${i}.${Date.now()}@test.example` })).status);
    }
    // ctx allows 8 an hour per client address; the tests above used 5 of them.
    expect(perClient).toEqual([202, 202, 202, 429, 429]);
    const refused = await request(ctx.app).post('/api/auth/password-reset').send({ email: `spray.last@test.example` });
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe('too_many_attempts');
  });
});
