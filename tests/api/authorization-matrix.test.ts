import { randomUUID } from 'node:crypto';
import { allows, ownOnly, routeTable, type AnyRoute } from '@crackpoint/api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, ROLES, type Role, type TestContext } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';
import { authorOf, routeFixtures, type Call, type Prepared } from './helpers/route-fixtures.ts';
import { send } from './helpers/send.ts';
import { createWorld, type Side, type World } from './helpers/world.ts';

/**
 * Every route of the table × every role × a record of the caller's own workspace and one of another
 * workspace, and for a route where some roles act only on their own records (`ownOnly`) a record of another member
 * of the caller's workspace too. Generated from the route table, so a route added without a fixture fails here.
 */

let ctx: TestContext;
let world: World;

beforeAll(async () => {
  // The matrix signs in and registers far more often than a person would; the limits have tests of their own.
  ctx = createTestContext({ SIGN_IN_ADDRESS_LIMIT_PER_MINUTE: '100000', REGISTER_LIMIT_PER_HOUR: '100000' });
  world = await createWorld(ctx, 'matrix');
});

afterAll(async () => {
  await world.close();
  await ctx.close();
});

/** own: the caller's workspace (the caller's own record); foreign: another workspace; member: another member's record. */
type Cell = Side | 'member';
const sidesOf = (route: AnyRoute): readonly Cell[] => (route.ownOnly?.length ? ['own', 'member', 'foreign'] : ['own', 'foreign']);
const routeName = (route: AnyRoute) => `${route.method.toUpperCase()} /api${route.path}`;

function fixtureOf(route: AnyRoute) {
  const fixture = routeFixtures[route.id];
  if (!fixture) throw new Error(`${route.id} has no fixture in tests/api/helpers/route-fixtures.ts`);
  return fixture;
}

/** Who calls and whose records are named: object and reference routes reach across; the rest act at home. */
function callFor(route: AnyRoute, role: Role, cell: Cell): Call {
  const side: Side = cell === 'member' ? 'own' : cell;
  const reachesAcross = route.scope === 'object' || route.scope === 'reference';
  const caller = reachesAcross ? world.own : world.workspace(side);
  // The caller's own record, or (member) one another member made: an engineer's, or an admin's for an engineer.
  const owner: Role = cell === 'member' ? (role === 'engineer' ? 'admin' : 'engineer') : authorOf(role);
  return { world, role, side, caller, target: world.workspace(side), owner };
}

function tokenFor(call: Call): string {
  return call.caller.id === world.own.id ? world.tokens.own[call.role] : world.tokens.foreign[call.role];
}

/** The same request with every id of the target workspace swapped for one that names nothing. */
function withMissingIds(prepared: Prepared, call: Call): Prepared {
  const ids = world.idsOf(call.target);
  const swap = (text: string) => text.replace(/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}/g, (id) => (ids.has(id) ? randomUUID() : id));
  return {
    ...prepared,
    path: swap(prepared.path),
    ...(prepared.body === undefined ? {} : { body: JSON.parse(swap(JSON.stringify(prepared.body))) as unknown }),
  };
}

function expectNoIdsOf(text: string, side: Side) {
  const other = world.workspace(world.other(side));
  for (const id of world.idsOf(other)) expect(text, `an id of the other workspace (${id}) showed`).not.toContain(id);
}

describe('the route table', () => {
  it('has a fixture for every route and no fixture without a route', () => {
    const ids = routeTable.map((route) => route.id);
    expect(ids.filter((id) => !(id in routeFixtures))).toEqual([]);
    expect(Object.keys(routeFixtures).filter((id) => !ids.includes(id))).toEqual([]);
  });

  it('names every route once, by id and by method and path', () => {
    const ids = routeTable.map((route) => route.id);
    expect(new Set(ids).size).toBe(ids.length);
    const keys = routeTable.map((route) => `${route.method} ${route.path}`);
    expect(new Set(keys).size).toBe(keys.length);
  });

  it('gives a foreign status to every route that names records in its body', () => {
    const missing = routeTable.filter((route) => route.scope === 'reference' && routeFixtures[route.id]?.foreignStatus === undefined);
    expect(missing.map((route) => route.id)).toEqual([]);
  });
});

for (const route of routeTable) {
  describe(routeName(route), () => {
    if (route.access !== 'public') {
      it('answers 401 without a token and writes nothing', async () => {
        const prepared = await fixtureOf(route).prepare(callFor(route, 'admin', 'own'));
        const before = await dbFingerprint(ctx.knex);
        const response = await send(ctx.app, route.method, { ...prepared, token: undefined }, null);
        expect(response.status).toBe(401);
        expect(response.body.error.code).toBe('unauthorized');
        expect(await dbFingerprint(ctx.knex)).toEqual(before);
      });
    }

    for (const role of ROLES) {
      for (const side of sidesOf(route)) {
        // A role that acts only on its own records is refused another member's, as a role without the route is.
        const allowed = allows(route, role) && !(side === 'member' && ownOnly(route, role));
        const across = (route.scope === 'object' || route.scope === 'reference') && side === 'foreign';
        const expected = !allowed ? 'forbidden' : across ? 'refused like a missing record' : `${route.success.status}`;
        const where = side === 'member' ? "another member's record" : `${side} workspace`;

        it(`${role}, ${where}: ${expected}`, async () => {
          const fixture = fixtureOf(route);
          const call = callFor(route, role, side);
          const prepared = await fixture.prepare(call);
          const before = await dbFingerprint(ctx.knex);
          const response = await send(ctx.app, route.method, prepared, tokenFor(call));

          if (!allowed) {
            expect(response.status, JSON.stringify(response.body)).toBe(403);
            expect(response.body.error.code).toBe('forbidden');
            expect(await dbFingerprint(ctx.knex)).toEqual(before);
            return;
          }
          if (across) {
            const status = route.scope === 'object' ? 404 : fixture.foreignStatus;
            expect(response.status, JSON.stringify(response.body)).toBe(status);
            expect(await dbFingerprint(ctx.knex)).toEqual(before);
            const missing = await send(ctx.app, route.method, withMissingIds(prepared, call), tokenFor(call));
            expect(missing.status).toBe(response.status);
            expect(missing.body).toEqual(response.body);
            return;
          }
          expect(response.status, JSON.stringify(response.body)).toBe(route.success.status);
          if (route.success.schema) {
            const parsed = route.success.schema.safeParse(response.body);
            expect(parsed.success, parsed.success ? '' : JSON.stringify(parsed.error.issues.slice(0, 3))).toBe(true);
          }
          expectNoIdsOf(response.text, call.caller.id === world.own.id ? 'own' : 'foreign');
        });
      }
    }
  });
}
