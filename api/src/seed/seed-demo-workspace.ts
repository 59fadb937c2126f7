import { defaultScenario } from '@crackpoint/sim-core';
import bcrypt from 'bcryptjs';
import type { Knex } from 'knex';
import type { UserRole } from '../models/index.ts';

/** The invented demo shop; every member signs in with DEMO_PASSWORD. */
export const DEMO_WORKSPACE = { name: 'Harrow Lane Boostworks', slug: 'harrow-lane-boostworks' } as const;
export const DEMO_PASSWORD = 'crackpoint-demo';
/** The demo shop's monthly compute quota: room for a few thousand dynamic pulls. */
export const DEMO_MONTHLY_COMPUTE_UNITS = 20_000;
export const DEMO_SCENARIO_NAME = 'Demo: 2.0 L four, single gate, bottom port on boost';

export const DEMO_USERS: readonly { email: string; displayName: string; role: UserRole }[] = [
  { email: 'admin@harrowlane.example', displayName: 'Shop admin', role: 'admin' },
  { email: 'engineer@harrowlane.example', displayName: 'Shop engineer', role: 'engineer' },
  { email: 'builder@harrowlane.example', displayName: 'Shop builder', role: 'builder' },
  { email: 'analyst@harrowlane.example', displayName: 'Shop analyst', role: 'analyst' },
];

export interface SeedResult {
  workspaceId: string;
  userIds: Record<UserRole, string>;
  scenarioId: string;
}

/**
 * Creates or refreshes the demo shop. Safe to run again: names and roles are brought back to the
 * demo's, existing passwords and an existing demo scenario are left as the shop changed them.
 * Plain knex with the real column names, so it works on any knex the caller has.
 */
export async function seedDemoWorkspace(knex: Knex, options: { bcryptCost?: number } = {}): Promise<SeedResult> {
  const cost = options.bcryptCost ?? 12;
  return knex.transaction(async (trx) => {
    const [workspace] = await trx('workspaces')
      .insert({ name: DEMO_WORKSPACE.name, slug: DEMO_WORKSPACE.slug })
      .onConflict('slug')
      .merge({ name: DEMO_WORKSPACE.name, updated_at: trx.fn.now() })
      .returning<{ id: string }[]>('id');
    if (!workspace) throw new Error('the demo workspace was not written');

    const existing = new Set(
      (await trx('users').whereIn('email', DEMO_USERS.map((u) => u.email)).select<{ email: string }[]>('email')).map(
        (row) => row.email,
      ),
    );
    const userIds = {} as Record<UserRole, string>;
    for (const user of DEMO_USERS) {
      // Hash only for members not there yet: bcrypt at cost 12 takes a noticeable fraction of a second.
      const passwordHash = existing.has(user.email) ? '' : await bcrypt.hash(DEMO_PASSWORD, cost);
      const [row] = await trx('users')
        .insert({
          workspace_id: workspace.id,
          email: user.email,
          password_hash: passwordHash,
          display_name: user.displayName,
          role: user.role,
        })
        .onConflict('email')
        .merge({ workspace_id: workspace.id, display_name: user.displayName, role: user.role, updated_at: trx.fn.now() })
        .returning<{ id: string }[]>('id');
      if (!row) throw new Error(`the demo member ${user.email} was not written`);
      userIds[user.role] = row.id;
    }

    const scenario = await trx('scenarios')
      .where({ workspace_id: workspace.id, name: DEMO_SCENARIO_NAME })
      .first<{ id: string } | undefined>('id');
    const scenarioId =
      scenario?.id ??
      (
        await trx('scenarios')
          .insert({
            workspace_id: workspace.id,
            owner_id: userIds.engineer,
            name: DEMO_SCENARIO_NAME,
            data: JSON.stringify(defaultScenario()),
          })
          .returning<{ id: string }[]>('id')
      )[0]?.id;
    if (!scenarioId) throw new Error('the demo scenario was not written');

    // A quota of its own, so the usage page shows one the admin set; one the shop changed stays as it is.
    const quota = await trx('quotas').where({ workspace_id: workspace.id }).whereNull('user_id').first<{ id: string } | undefined>('id');
    if (!quota) {
      await trx('quotas').insert({ workspace_id: workspace.id, user_id: null, monthly_compute_units: DEMO_MONTHLY_COMPUTE_UNITS, set_by: userIds.admin });
    }

    return { workspaceId: workspace.id, userIds, scenarioId };
  });
}
