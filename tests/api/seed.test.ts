import { DEMO_PASSWORD, DEMO_SCENARIO_NAME, DEMO_USERS, DEMO_WORKSPACE, seedDemoWorkspace } from '@crackpoint/api';
import { defaultScenario } from '@crackpoint/sim-core';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from './helpers/context.ts';

let ctx: TestContext;

beforeAll(() => {
  ctx = createTestContext();
});

afterAll(async () => {
  await ctx.close();
});

describe('seedDemoWorkspace', () => {
  it('creates the demo shop, its four members and the demo scenario, and is idempotent', async () => {
    const first = await seedDemoWorkspace(ctx.knex, { bcryptCost: 4 });
    const second = await seedDemoWorkspace(ctx.knex, { bcryptCost: 4 });
    expect(second).toEqual(first);

    const workspaces = await ctx.knex('workspaces').where({ slug: DEMO_WORKSPACE.slug });
    expect(workspaces).toHaveLength(1);
    expect(workspaces[0]).toMatchObject({ id: first.workspaceId, name: 'Harrow Lane Boostworks' });

    const users = await ctx.knex('users').where({ workspace_id: first.workspaceId }).orderBy('email');
    expect(users.map((u) => [u.email, u.role])).toEqual(
      [...DEMO_USERS].sort((a, b) => a.email.localeCompare(b.email)).map((u) => [u.email, u.role]),
    );
    for (const user of users) expect(user.password_hash).toMatch(/^\$2[aby]\$/);

    const scenarios = await ctx.knex('scenarios').where({ workspace_id: first.workspaceId, name: DEMO_SCENARIO_NAME });
    expect(scenarios).toHaveLength(1);
    expect(scenarios[0].data).toEqual(defaultScenario());
  });

  it('lets every demo member sign in with the demo password and see the demo scenario', async () => {
    await seedDemoWorkspace(ctx.knex, { bcryptCost: 4 });
    for (const member of DEMO_USERS) {
      const response = await request(ctx.app).post('/api/auth/sign-in').send({ email: member.email, password: DEMO_PASSWORD });
      expect(response.status).toBe(200);
      expect(response.body.user).toMatchObject({ role: member.role, workspace: { name: DEMO_WORKSPACE.name } });
    }
    const signIn = await request(ctx.app).post('/api/auth/sign-in').send({ email: 'analyst@harrowlane.example', password: DEMO_PASSWORD });
    const list = await request(ctx.app).get('/api/scenarios').set('Authorization', `Bearer ${signIn.body.token}`);
    expect(list.body.items.map((s: { name: string }) => s.name)).toContain(DEMO_SCENARIO_NAME);
  });
});
