import { routeTable, type AnyRoute } from '@crackpoint/api';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { badBodies, namesField, schemaOffers, SQL_TEXT, type BadCase } from './helpers/bad-input.ts';
import { createTestContext, type TestContext } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';
import { routeFixtures, type Call, type Prepared } from './helpers/route-fixtures.ts';
import { send } from './helpers/send.ts';
import { createWorld, type World } from './helpers/world.ts';

/**
 * Bad input for every write route of the table, made from the route's own body schema and the valid
 * request of its fixture: each is a 4xx naming the field, and the database is exactly as before.
 */

let ctx: TestContext;
let world: World;

beforeAll(async () => {
  // These tests send far more failing requests than a person would; the limits have tests of their own.
  ctx = createTestContext({
    SIGN_IN_LIMIT_PER_MINUTE: '10000',
    SIGN_IN_ADDRESS_LIMIT_PER_MINUTE: '100000',
    REGISTER_LIMIT_PER_HOUR: '100000',
    CHANGE_PASSWORD_LIMIT_PER_15_MINUTES: '10000',
  });
  world = await createWorld(ctx, 'bad-input');
});

afterAll(async () => {
  await world.close();
  await ctx.close();
});

const writeRoutes = routeTable.filter((route) => route.method !== 'get');
const routeName = (route: AnyRoute) => `${route.method.toUpperCase()} /api${route.path}`;

function adminCall(): Call {
  return { world, role: 'admin', side: 'own', caller: world.own, target: world.own, owner: 'admin' };
}

async function prepare(route: AnyRoute): Promise<Prepared> {
  const fixture = routeFixtures[route.id];
  if (!fixture) throw new Error(`${route.id} has no fixture`);
  return fixture.prepare(adminCall());
}

const tokenOf = (prepared: Prepared) => prepared.token ?? world.tokens.own.admin;

/** Runs every case on a fresh valid request and lists the ones that were not answered as they should be. */
async function failuresOf(route: AnyRoute, cases: BadCase[]): Promise<string[]> {
  const failures: string[] = [];
  for (const bad of cases) {
    const fresh = await prepare(route);
    const before = await dbFingerprint(ctx.knex);
    const response = await send(ctx.app, route.method, { ...fresh, body: bad.apply(fresh.body ?? {}) }, tokenOf(fresh));
    const fields = response.body?.error?.fields as Record<string, string> | undefined;
    const refused = response.status >= 400 && response.status < 500;

    // A public route may answer a well-formed request for an account it does not know with 401, naming nothing.
    if (bad.kind === 'sql text' && response.status === 401 && route.access === 'public') {
      if (JSON.stringify(await dbFingerprint(ctx.knex)) !== JSON.stringify(before)) failures.push(`${bad.name}: the database changed`);
      continue;
    }
    if (bad.kind === 'sql text' && !refused) {
      // Accepted as text: it must come back exactly as sent (passwords are never sent back) and every table must stand.
      const echoed = response.text.includes(JSON.stringify(SQL_TEXT).slice(1, -1));
      if (response.status !== route.success.status) failures.push(`${bad.name}: ${response.status}`);
      else if (!echoed && !/password/i.test(bad.path)) failures.push(`${bad.name}: accepted but not stored as sent`);
      continue;
    }
    if (!refused || response.status === 401 || response.status === 403) {
      failures.push(`${bad.name}: ${response.status} ${JSON.stringify(response.body).slice(0, 160)}`);
      continue;
    }
    if (!namesField(fields, bad.path)) failures.push(`${bad.name}: ${response.status} does not name it (${JSON.stringify(fields)})`);
    const after = await dbFingerprint(ctx.knex);
    if (JSON.stringify(after) !== JSON.stringify(before)) failures.push(`${bad.name}: the database changed`);
  }
  return failures;
}

async function expectRefusedAndUnchanged(route: AnyRoute, status: number, code: string, sendIt: (prepared: Prepared) => request.Test) {
  const fresh = await prepare(route);
  const before = await dbFingerprint(ctx.knex);
  const response = await sendIt(fresh);
  expect(response.status, JSON.stringify(response.body)).toBe(status);
  expect(response.body.error.code).toBe(code);
  expect(await dbFingerprint(ctx.knex)).toEqual(before);
}

const url = (prepared: Prepared) => `/api${prepared.path}`;
function raw(route: AnyRoute, prepared: Prepared): request.Test {
  const agent = request(ctx.app);
  const method = route.method as 'post' | 'patch' | 'put' | 'delete';
  return agent[method](url(prepared)).set('Authorization', `Bearer ${tokenOf(prepared)}`);
}

const KINDS = ['missing', 'wrong type', 'out of range', 'unknown field', 'sql text'] as const;
const KIND_TITLES: Record<(typeof KINDS)[number], string> = {
  missing: 'every required field left out',
  'wrong type': 'every field of the wrong type',
  'out of range': 'every bounded field out of its range',
  'unknown field': 'an unknown field at every level',
  'sql text': 'SQL metacharacters in every text field',
};

describe('the bad-input tests', () => {
  it('cover every write route of the table', () => {
    expect(writeRoutes.length).toBeGreaterThan(20);
    expect(writeRoutes.filter((route) => !routeFixtures[route.id]).map((route) => route.id)).toEqual([]);
  });
});

for (const route of writeRoutes) {
  describe(routeName(route), () => {
    it('accepts the valid request the bad ones are made from', async () => {
      const fresh = await prepare(route);
      const response = await send(ctx.app, route.method, fresh, tokenOf(fresh));
      expect(response.status, JSON.stringify(response.body).slice(0, 300)).toBe(route.success.status);
    });

    // A form upload is not JSON: malformed or oversized JSON is refused by its media type (415) before it is read.
    const readsJson = (route.requestBody?.kind ?? 'json') === 'json';

    if (readsJson) {
      it('answers malformed JSON with 400 and writes nothing', async () => {
        await expectRefusedAndUnchanged(route, 400, 'malformed_json', (p) => raw(route, p).set('Content-Type', 'application/json').send('{"name": "Harrow",'));
      });
    }

    it('answers a body that is not JSON with 415 and writes nothing', async () => {
      await expectRefusedAndUnchanged(route, 415, 'unsupported_media_type', (p) => raw(route, p).set('Content-Type', 'text/plain').send('name=Harrow'));
    });

    if (readsJson) {
      it('answers an oversized body with 413 and writes nothing', async () => {
        await expectRefusedAndUnchanged(route, 413, 'payload_too_large', (p) =>
          raw(route, p).send({ ...(typeof p.body === 'object' && p.body !== null ? p.body : {}), padding: 'x'.repeat(1_100_000) }),
        );
      });
    }

    if (route.scope === 'object') {
      it('answers a path id that is not an id with 404 and writes nothing', async () => {
        await expectRefusedAndUnchanged(route, 404, 'not_found', (p) => {
          const broken = { ...p, path: p.path.replace(/[0-9a-f-]{36}/, "1'%20or%20'1'='1") };
          return raw(route, broken).send((p.body ?? {}) as object);
        });
      });
    }

    if (route.method === 'get' && route.query) {
      it('answers a null character in the query with 400 naming the parameter, never a 500', async () => {
        const fresh = await prepare(route);
        const response = await request(ctx.app)
          .get(`${url(fresh)}?q=%00&units=%00`)
          .set('Authorization', `Bearer ${tokenOf(fresh)}`);
        expect(response.status, JSON.stringify(response.body)).toBe(400);
        expect(response.body.error.fields).toMatchObject({ q: 'must not contain a null character' });
      });
    }

    if (!route.body) return;

    if ((route.requestBody?.kind ?? 'json') === 'json') it('answers a null character in any text and keys like __proto__ with 400 naming each, and writes nothing', async () => {
      const fresh = await prepare(route);
      const sent = (fresh.body ?? {}) as Record<string, unknown>;
      const before = await dbFingerprint(ctx.knex);
      const nul = await raw(route, fresh).send({ ...sent, note: 'pressure\u0000spike' });
      expect(nul.status, JSON.stringify(nul.body)).toBe(400);
      expect(nul.body.error.fields).toMatchObject({ note: 'must not contain a null character' });
      // Sent as JSON text: JSON.parse makes "__proto__" an own key, which must be named, not swallowed.
      const proto = await raw(route, fresh)
        .set('Content-Type', 'application/json')
        .send(`{"__proto__": {"admin": true}, "constructor": 1, ${JSON.stringify(sent).slice(1)}`.replace(', }', '}'));
      expect(proto.status, JSON.stringify(proto.body)).toBe(400);
      expect(proto.body.error.fields).toMatchObject({ ['__proto__']: 'is not a field name', constructor: 'is not a field name' });
      expect(Object.keys(proto.body.error.fields)).toContain('__proto__');
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    });

    it('answers a body that is not an object with 400 naming the body', async () => {
      const fresh = await prepare(route);
      const before = await dbFingerprint(ctx.knex);
      const response = await raw(route, fresh).send([1, 2, 3]);
      expect(response.status).toBe(400);
      expect(Object.keys(response.body.error.fields)).toEqual(['body']);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    });

    for (const kind of KINDS) {
      const body = route.body;
      it(`answers ${KIND_TITLES[kind]} with a 4xx naming it, and writes nothing`, async () => {
        const base = await prepare(route);
        const cases = badBodies(body, base.body ?? {}).filter((c) => c.kind === kind);
        // No cases only where the schema has nothing of the kind (no text field at all, say).
        expect(cases.length > 0, `cases of ${kind}`).toBe(schemaOffers(body, kind));
        const failures = await failuresOf(route, cases);
        expect(failures).toEqual([]);
      }, 120_000);
    }
  });
}
