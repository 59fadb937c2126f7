import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Writable } from 'node:stream';
import { createApp, loadConfig } from '@crackpoint/api';
import jwt from 'jsonwebtoken';
import { pino } from 'pino';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  createTestContext,
  createWorkspace,
  deleteWorkspace,
  signIn,
  TEST_PASSWORD,
  type TestContext,
  type TestWorkspace,
} from './helpers/context.ts';

let ctx: TestContext;
let shop: TestWorkspace;

beforeAll(async () => {
  ctx = createTestContext();
  shop = await createWorkspace(ctx.knex, 'auth');
});

afterAll(async () => {
  await deleteWorkspace(ctx.knex, shop);
  await ctx.close();
});

const INVALID = { error: { code: 'invalid_credentials', message: 'E-mail or password is not right.' } };

describe('POST /api/auth/sign-in', () => {
  it('returns a token and the member, never the password hash', async () => {
    const response = await request(ctx.app).post('/api/auth/sign-in').send({ email: shop.members.engineer.email, password: TEST_PASSWORD });
    expect(response.status).toBe(200);
    expect(typeof response.body.token).toBe('string');
    expect(response.body.user).toEqual({
      id: shop.members.engineer.id,
      email: shop.members.engineer.email,
      displayName: 'Test engineer',
      role: 'engineer',
      unitSystem: 'us',
      workspace: { id: shop.id, name: shop.name },
    });
    expect(JSON.stringify(response.body)).not.toMatch(/password|\$2[aby]\$/i);
    const claims = jwt.verify(response.body.token, ctx.config.jwtSecret) as jwt.JwtPayload;
    expect(claims.sub).toBe(shop.members.engineer.id);
    expect(claims.exp! - claims.iat!).toBe(ctx.config.jwtTtlSeconds);
  });

  it('accepts the e-mail in any letter case', async () => {
    const response = await request(ctx.app)
      .post('/api/auth/sign-in')
      .send({ email: shop.members.builder.email.toUpperCase(), password: TEST_PASSWORD });
    expect(response.status).toBe(200);
    expect(response.body.user.id).toBe(shop.members.builder.id);
  });

  it('returns 401 with the contract message for a wrong password', async () => {
    const response = await request(ctx.app).post('/api/auth/sign-in').send({ email: shop.members.admin.email, password: 'not it' });
    expect(response.status).toBe(401);
    expect(response.body).toEqual(INVALID);
  });

  it('returns the same 401 for an unknown e-mail', async () => {
    const response = await request(ctx.app).post('/api/auth/sign-in').send({ email: 'nobody.auth@test.example', password: TEST_PASSWORD });
    expect(response.status).toBe(401);
    expect(response.body).toEqual(INVALID);
  });

  it('returns 400 naming each missing field', async () => {
    const response = await request(ctx.app).post('/api/auth/sign-in').send({});
    expect(response.status).toBe(400);
    expect(response.body.error.code).toBe('validation_failed');
    expect(Object.keys(response.body.error.fields).sort()).toEqual(['email', 'password']);
  });

  it('returns 400 for malformed JSON', async () => {
    const response = await request(ctx.app).post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email": ');
    expect(response.status).toBe(400);
    expect(response.body.error.code).toBe('malformed_json');
  });

  it('returns 413 for a body over the limit', async () => {
    const response = await request(ctx.app)
      .post('/api/auth/sign-in')
      .send({ email: shop.members.admin.email, password: 'x'.repeat(2_000_000) });
    expect(response.status).toBe(413);
    expect(response.body.error.code).toBe('payload_too_large');
  });
});

describe('sign-in attempt limit', () => {
  it('answers 429 after too many failed attempts for one e-mail, and still lets another e-mail in', async () => {
    const limited = createTestContext({ SIGN_IN_LIMIT_PER_MINUTE: '3' });
    try {
      const attempt = (email: string, password: string) => request(limited.app).post('/api/auth/sign-in').send({ email, password });
      for (let i = 0; i < 3; i++) expect((await attempt(shop.members.analyst.email, 'wrong')).status).toBe(401);
      const blocked = await attempt(shop.members.analyst.email, TEST_PASSWORD);
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('too_many_attempts');
      expect((await attempt(shop.members.admin.email, TEST_PASSWORD)).status).toBe(200);
    } finally {
      await limited.close();
    }
  });
});

describe('GET /api/me', () => {
  it('returns the signed-in member with the workspace', async () => {
    const token = await signIn(ctx.app, shop.members.analyst.email);
    const response = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(response.status).toBe(200);
    expect(response.body).toEqual({
      user: {
        id: shop.members.analyst.id,
        email: shop.members.analyst.email,
        displayName: 'Test analyst',
        role: 'analyst',
        unitSystem: 'us',
        workspace: { id: shop.id, name: shop.name },
      },
    });
  });

  it('returns 401 without a token', async () => {
    const response = await request(ctx.app).get('/api/me');
    expect(response.status).toBe(401);
    expect(response.body.error.code).toBe('unauthorized');
  });

  it('returns 401 for a tampered token', async () => {
    const token = await signIn(ctx.app, shop.members.analyst.email);
    const [header, payload, signature] = token.split('.') as [string, string, string];
    const claims = JSON.parse(Buffer.from(payload, 'base64url').toString()) as Record<string, unknown>;
    const forged = Buffer.from(JSON.stringify({ ...claims, role: 'admin' })).toString('base64url');
    const response = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${header}.${forged}.${signature}`);
    expect(response.status).toBe(401);
    expect(response.body.error.code).toBe('invalid_token');
  });

  it('returns 401 for a token signed with another secret', async () => {
    const token = jwt.sign({ wid: shop.id, role: 'admin' }, 'some-other-secret-that-is-long-enough!!', {
      subject: shop.members.admin.id,
      expiresIn: 600,
    });
    const response = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(response.status).toBe(401);
  });

  it('returns 401 with token_expired for an expired token', async () => {
    const token = jwt.sign(
      { wid: shop.id, role: 'admin', iat: Math.floor(Date.now() / 1000) - 7200, exp: Math.floor(Date.now() / 1000) - 60 },
      ctx.config.jwtSecret,
      { subject: shop.members.admin.id },
    );
    const response = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(response.status).toBe(401);
    expect(response.body.error.code).toBe('token_expired');
  });

  it('returns 401 once the member has been deleted, even with a valid token', async () => {
    const gone = await createWorkspace(ctx.knex, 'auth-gone');
    const token = await signIn(ctx.app, gone.members.builder.email);
    await ctx.knex('users').where({ id: gone.members.builder.id }).delete();
    const response = await request(ctx.app).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(response.status).toBe(401);
    await deleteWorkspace(ctx.knex, gone);
  });

  it('uses the role as it is now in the database, not as it was when the token was made', async () => {
    const demoted = await createWorkspace(ctx.knex, 'auth-demoted');
    const token = await signIn(ctx.app, demoted.members.engineer.email);
    await ctx.knex('users').where({ id: demoted.members.engineer.id }).update({ role: 'analyst' });
    const response = await request(ctx.app).post('/api/scenarios').set('Authorization', `Bearer ${token}`).send({ name: 'After demotion' });
    expect(response.status).toBe(403);
    expect(await ctx.knex('scenarios').where({ workspace_id: demoted.id }).count<{ count: string }[]>('* as count')).toEqual([{ count: '0' }]);
    await deleteWorkspace(ctx.knex, demoted);
  });
});

describe('request logs', () => {
  it('never hold the password, the token or the body', async () => {
    const lines: string[] = [];
    const sink = new Writable({
      write(chunk: Buffer, _encoding, done) {
        lines.push(chunk.toString());
        done();
      },
    });
    const app = createApp({ knex: ctx.knex, queue: ctx.queue, config: ctx.config, logger: pino({ level: 'trace' }, sink) });
    const signedIn = await request(app).post('/api/auth/sign-in').send({ email: shop.members.admin.email, password: TEST_PASSWORD });
    await request(app).post('/api/auth/sign-in').send({ email: shop.members.admin.email, password: 'a wrong secret' });
    await request(app).get('/api/me').set('Authorization', `Bearer ${signedIn.body.token}`);
    const log = lines.join('');
    expect(lines.length).toBeGreaterThanOrEqual(3);
    expect(log).toContain('/api/me');
    expect(log).not.toContain(TEST_PASSWORD);
    expect(log).not.toContain('a wrong secret');
    expect(log).not.toContain(signedIn.body.token);
    expect(log.toLowerCase()).not.toContain('authorization');
  });
});

describe('the API edge', () => {
  it('reports health of the database and the queue', async () => {
    const response = await request(ctx.app).get('/api/health');
    expect(response.status).toBe(200);
    expect(response.body).toEqual({ status: 'ok', database: 'ok', queue: 'ok' });
  });

  it('answers an unknown API route with a JSON 404', async () => {
    const response = await request(ctx.app).get('/api/no-such-thing');
    expect(response.status).toBe(404);
    expect(response.body.error.code).toBe('not_found');
  });

  it('serves the built web app with a history fallback, but never for /api', async () => {
    const dist = mkdtempSync(join(tmpdir(), 'crackpoint-web-dist-'));
    try {
      mkdirSync(join(dist, 'assets'));
      writeFileSync(join(dist, 'index.html'), '<!doctype html><title>Crackpoint test shell</title>');
      writeFileSync(join(dist, 'assets', 'app.js'), 'console.log("crackpoint")');
      const config = loadConfig({ ...process.env, NODE_ENV: 'test', LOG_LEVEL: 'silent', WEB_DIST: dist });
      const app = createApp({ knex: ctx.knex, queue: ctx.queue, config });

      const root = await request(app).get('/');
      expect(root.status).toBe(200);
      expect(root.text).toContain('Crackpoint test shell');
      const deep = await request(app).get('/scenarios/some-id/edit');
      expect(deep.status).toBe(200);
      expect(deep.text).toContain('Crackpoint test shell');
      const asset = await request(app).get('/assets/app.js');
      expect(asset.status).toBe(200);
      expect(asset.text).toContain('crackpoint');
      const api = await request(app).get('/api/not-a-route');
      expect(api.status).toBe(404);
      expect(api.body.error.code).toBe('not_found');
      const post = await request(app).post('/somewhere').send({});
      expect(post.status).toBe(404);
    } finally {
      rmSync(dist, { recursive: true, force: true });
    }
  });
});
