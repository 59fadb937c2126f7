import type { Knex } from 'knex';
import { AppError } from '../errors/index.ts';
import { User } from '../models/index.ts';
import type { MemberView, NotificationsView, UpdateMemberBody, UpdateNotificationsBody } from '../schemas/team.ts';
import type { AuthContext } from './auth.ts';
import { recordAudit } from './audit.ts';

function present(user: User): MemberView {
  return { id: user.id, email: user.email, displayName: user.displayName, role: user.role, createdAt: user.createdAt.toISOString() };
}

export async function listMembers(knex: Knex, workspaceId: string): Promise<{ items: MemberView[] }> {
  const users = await User.query(knex).where('workspace_id', workspaceId).orderBy('display_name').orderBy('email');
  return { items: users.map(present) };
}

/**
 * A new role for a member of the workspace. The admins' rows are locked first, so two admins demoting
 * each other at the same instant take turns and the second finds they would leave no admin.
 */
export async function updateMember(knex: Knex, auth: AuthContext, id: string, input: UpdateMemberBody): Promise<{ member: MemberView }> {
  return knex.transaction(async (trx) => {
    const admins = await User.query(trx).where({ workspace_id: auth.workspaceId, role: 'admin' }).forUpdate().select('id');
    const member = await User.query(trx).where('workspace_id', auth.workspaceId).findById(id).forUpdate();
    if (!member) throw AppError.notFound('Member');
    if (member.role === input.role) return { member: present(member) };
    if (member.role === 'admin' && admins.length <= 1) {
      throw new AppError(409, 'last_admin', 'A workspace needs at least one admin: make someone else admin first.', {
        role: 'cannot leave the workspace without an admin',
      });
    }
    const [updated] = await User.query(trx).where('users.id', id).patch({ role: input.role }).returning('*');
    if (!updated) throw AppError.notFound('Member');
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'change_role',
      entityType: 'user',
      entityId: id,
      changes: { role: { from: member.role, to: input.role } },
    });
    return { member: present(updated) };
  });
}

export async function getNotifications(knex: Knex, auth: AuthContext): Promise<NotificationsView> {
  const user = await User.query(knex).findById(auth.userId).select('sweep_notice_since');
  return { notifications: { sweepFinished: Boolean(user?.sweepNoticeSince) } };
}

/** Switching on keeps an earlier start, so sweeps finished while it was on are never mailed twice or skipped. */
export async function updateNotifications(knex: Knex, auth: AuthContext, input: UpdateNotificationsBody): Promise<NotificationsView> {
  const query = User.query(knex).where('users.id', auth.userId);
  if (input.sweepFinished) await query.whereNull('sweep_notice_since').patch({ sweepNoticeSince: new Date() });
  else await query.patch({ sweepNoticeSince: null });
  return getNotifications(knex, auth);
}
