import { randomUUID } from 'node:crypto';
import { defaultScenario } from '@crackpoint/sim-core';
import type { Knex } from 'knex';
import bcrypt from 'bcryptjs';
import {
  createWorkspace,
  deleteWorkspace,
  ROLES,
  signIn,
  TEST_PASSWORD,
  tokensFor,
  type Role,
  type TestContext,
  type TestWorkspace,
} from './context.ts';

export type Side = 'own' | 'foreign';

export const LIBRARY_TABLES = ['wastegates', 'springs', 'turbos', 'engines', 'supplies'] as const;
export type LibraryTable = (typeof LIBRARY_TABLES)[number];

/** A valid part of each kind: the default scenario's own sections. */
export const PART_SAMPLES: Record<LibraryTable, () => unknown> = {
  wastegates: () => defaultScenario().wastegate,
  springs: () => defaultScenario().springs[0],
  turbos: () => defaultScenario().turbo,
  engines: () => defaultScenario().engine,
  supplies: () => ({ kind: 'co2', regulatorSetpointPa: 103_421, regulatorDroopPa: 20_000, bottleVolumeM3: 0.0046, fillMassKg: 2.27, bottleTemperatureK: 298.15 }),
};

/**
 * Two workspaces with one member of each role, and factories that write records straight to the
 * database (fast, and independent of the routes under test). Every id made is remembered per workspace,
 * so a test can check that one workspace's ids never appear in what the other is shown.
 */
export interface World {
  ctx: TestContext;
  own: TestWorkspace;
  rival: TestWorkspace;
  tokens: Record<Side, Record<Role, string>>;
  ids: Map<string, Set<string>>;
  workspace(side: Side): TestWorkspace;
  other(side: Side): Side;
  track(workspace: TestWorkspace, id: string): string;
  idsOf(workspace: TestWorkspace): ReadonlySet<string>;
  scenario(workspace: TestWorkspace, owner: Role, name?: string): Promise<string>;
  /** A sweep of a scenario, started by a member of `creator`'s role (an engineer unless said). */
  sweep(workspace: TestWorkspace, scenarioId: string, creator?: Role): Promise<string>;
  /** A part of the workspace's library (table = its kind: wastegates, springs, …). */
  part(workspace: TestWorkspace, table: LibraryTable, name?: string): Promise<string>;
  /** A new member with a session of their own, for routes that spend or change the session. */
  member(workspace: TestWorkspace, role: Role): Promise<{ id: string; email: string; token: string }>;
  /** An e-mail for a workspace a test registers; the workspace goes when the world closes. */
  registrationEmail(): string;
  close(): Promise<void>;
}

export async function createWorld(ctx: TestContext, label: string): Promise<World> {
  const own = await createWorkspace(ctx.knex, `${label}-own`);
  const rival = await createWorkspace(ctx.knex, `${label}-rival`);
  const tokens = { own: await tokensFor(ctx.app, own), foreign: await tokensFor(ctx.app, rival) };
  const ids = new Map<string, Set<string>>([
    [own.id, new Set([own.id, ...ROLES.map((r) => own.members[r].id)])],
    [rival.id, new Set([rival.id, ...ROLES.map((r) => rival.members[r].id)])],
  ]);
  const knex: Knex = ctx.knex;
  const registered: string[] = [];

  const world: World = {
    ctx,
    own,
    rival,
    tokens,
    ids,
    workspace: (side) => (side === 'own' ? own : rival),
    other: (side) => (side === 'own' ? 'foreign' : 'own'),
    track(workspace, id) {
      ids.get(workspace.id)?.add(id);
      return id;
    },
    idsOf: (workspace) => ids.get(workspace.id) ?? new Set(),
    async scenario(workspace, owner, name = `Scenario ${randomUUID().slice(0, 8)}`) {
      const [row] = await knex('scenarios')
        .insert({ workspace_id: workspace.id, owner_id: workspace.members[owner].id, name, data: JSON.stringify(defaultScenario()) })
        .returning<{ id: string }[]>('id');
      if (!row) throw new Error('scenario not written');
      return world.track(workspace, row.id);
    },
    async sweep(workspace, scenarioId, creator = 'engineer') {
      const axes = [
        { path: 'springs.0.seatForceN', values: [100, 150] },
        { path: 'exhaust.ratio', values: [1.2, 1.6] },
      ];
      const [row] = await knex('sweeps')
        .insert({
          workspace_id: workspace.id,
          scenario_id: scenarioId,
          created_by: workspace.members[creator].id,
          scenario_snapshot: JSON.stringify(defaultScenario()),
          level: 'static',
          axes: JSON.stringify(axes),
          point_count: 4,
          chunk_size: 4,
        })
        .returning<{ id: string }[]>('id');
      if (!row) throw new Error('sweep not written');
      return world.track(workspace, row.id);
    },
    async part(workspace, table, name = `Part ${randomUUID().slice(0, 8)}`) {
      const [row] = await knex(table)
        .insert({ workspace_id: workspace.id, name, data: JSON.stringify(PART_SAMPLES[table]()), created_by: workspace.members.engineer.id })
        .returning<{ id: string }[]>('id');
      if (!row) throw new Error('part not written');
      return world.track(workspace, row.id);
    },
    async member(workspace, role) {
      const email = `${role}.${randomUUID().slice(0, 8)}@test.example`;
      const [row] = await knex('users')
        .insert({ workspace_id: workspace.id, email, password_hash: await bcrypt.hash(TEST_PASSWORD, 4), display_name: `Extra ${role}`, role })
        .returning<{ id: string }[]>('id');
      if (!row) throw new Error('member not written');
      world.track(workspace, row.id);
      return { id: row.id, email, token: await signIn(ctx.app, email) };
    },
    registrationEmail() {
      const email = `registered.${randomUUID().slice(0, 8)}@test.example`;
      registered.push(email);
      return email;
    },
    async close() {
      const workspaces = await knex('users').whereIn('email', registered).pluck<string[]>('workspace_id');
      await knex('workspaces').whereIn('id', workspaces).delete();
      await deleteWorkspace(knex, own);
      await deleteWorkspace(knex, rival);
    },
  };
  return world;
}
