import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import type { UserRole } from '../models/index.ts';
import type { QuotasView } from '../schemas/usage.ts';
import { recordAudit } from './audit.ts';
import type { AuthContext } from './auth.ts';

interface QuotaRow {
  id: string;
  user_id: string | null;
  monthly_compute_units: string;
  updated_at: Date;
}

interface MemberRow {
  id: string;
  display_name: string;
  email: string;
  role: UserRole;
}

/** The workspace's members by name, for quota and usage tables. */
export async function listMembers(knex: Knex, workspaceId: string): Promise<MemberRow[]> {
  return knex('users')
    .where({ workspace_id: workspaceId })
    .orderBy('display_name')
    .orderBy('email')
    .select<MemberRow[]>('id', 'display_name', 'email', 'role');
}

export async function getQuotas(knex: Knex, config: Pick<Config, 'defaultWorkspaceMonthlyUnits'>, workspaceId: string): Promise<QuotasView> {
  const [quotas, members] = await Promise.all([
    knex('quotas').where({ workspace_id: workspaceId }).select<QuotaRow[]>('id', 'user_id', 'monthly_compute_units', 'updated_at'),
    listMembers(knex, workspaceId),
  ]);
  const own = quotas.find((q) => q.user_id === null);
  const byMember = new Map(quotas.filter((q) => q.user_id !== null).map((q) => [q.user_id, Number(q.monthly_compute_units)]));
  return {
    workspace: {
      monthlyComputeUnits: own ? Number(own.monthly_compute_units) : config.defaultWorkspaceMonthlyUnits,
      isDefault: !own,
      updatedAt: own ? own.updated_at.toISOString() : null,
    },
    members: members.map((m) => ({
      userId: m.id,
      displayName: m.display_name,
      email: m.email,
      role: m.role,
      monthlyComputeUnits: byMember.get(m.id) ?? null,
    })),
  };
}

/**
 * Sets (or with null removes) one quota row and writes its audit row in the same transaction. The row
 * is read under a lock first, so two admins saving at once are serialised rather than both inserting.
 */
async function writeQuota(trx: Knex.Transaction, auth: AuthContext, userId: string | null, units: number | null, defaultUnits: number | null): Promise<void> {
  const scope = trx('quotas').where({ workspace_id: auth.workspaceId });
  if (userId === null) scope.whereNull('user_id');
  else scope.where({ user_id: userId });
  const existing = await scope.clone().forUpdate().first<QuotaRow | undefined>('id', 'user_id', 'monthly_compute_units', 'updated_at');
  const before = existing ? Number(existing.monthly_compute_units) : defaultUnits;
  if (units === null) {
    if (!existing) return;
    await trx('quotas').where({ id: existing.id }).delete();
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'delete',
      entityType: 'quota',
      entityId: existing.id,
      changes: { monthlyComputeUnits: { from: before }, userId: { from: userId } },
    });
    return;
  }
  if (existing) {
    if (before === units) return;
    await trx('quotas').where({ id: existing.id }).update({ monthly_compute_units: units, set_by: auth.userId, updated_at: trx.fn.now() });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'update',
      entityType: 'quota',
      entityId: existing.id,
      changes: { monthlyComputeUnits: { from: before, to: units } },
    });
    return;
  }
  const [row] = await trx('quotas')
    .insert({ workspace_id: auth.workspaceId, user_id: userId, monthly_compute_units: units, set_by: auth.userId })
    .returning<{ id: string }[]>('id');
  await recordAudit(trx, {
    workspaceId: auth.workspaceId,
    actorId: auth.userId,
    action: 'create',
    entityType: 'quota',
    entityId: row?.id ?? null,
    changes: {
      monthlyComputeUnits: before === null ? { to: units } : { from: before, to: units },
      userId: { to: userId },
    },
  });
}

export async function setWorkspaceQuota(
  deps: { knex: Knex; config: Pick<Config, 'defaultWorkspaceMonthlyUnits'> },
  auth: AuthContext,
  units: number,
): Promise<QuotasView> {
  await deps.knex.transaction((trx) => writeQuota(trx, auth, null, units, deps.config.defaultWorkspaceMonthlyUnits));
  return getQuotas(deps.knex, deps.config, auth.workspaceId);
}

export async function setMemberQuota(
  deps: { knex: Knex; config: Pick<Config, 'defaultWorkspaceMonthlyUnits'> },
  auth: AuthContext,
  userId: string,
  units: number | null,
): Promise<QuotasView> {
  await deps.knex.transaction(async (trx) => {
    const member = await trx('users').where({ id: userId, workspace_id: auth.workspaceId }).first<{ id: string } | undefined>('id');
    if (!member) throw AppError.notFound('Member');
    await writeQuota(trx, auth, userId, units, null);
  });
  return getQuotas(deps.knex, deps.config, auth.workspaceId);
}
