import { randomBytes, randomUUID } from 'node:crypto';
import { hashSecret } from '@crackpoint/api';
import type { Knex } from 'knex';
import type { RouteFixture } from './route-fixtures.ts';
import type { TestWorkspace } from './context.ts';

const unique = () => randomUUID().slice(0, 8);
const secret = () => randomBytes(32).toString('base64url');

/** An open invitation written straight to the database; its secret is returned as a link would carry it. */
export async function writeInvitation(knex: Knex, workspace: TestWorkspace, options: { email?: string; expiresAt?: Date } = {}) {
  const token = secret();
  const [row] = await knex('invitations')
    .insert({
      workspace_id: workspace.id,
      email: options.email ?? `invited.${unique()}@test.example`,
      role: 'builder',
      token_hash: hashSecret(token),
      invited_by: workspace.members.admin.id,
      expires_at: options.expiresAt ?? new Date(Date.now() + 3_600_000),
    })
    .returning<{ id: string }[]>('id');
  if (!row) throw new Error('invitation not written');
  return { id: row.id, token };
}

export async function writeShareLink(
  knex: Knex,
  workspace: TestWorkspace,
  target: { scenarioId: string } | { sweepId: string },
  options: { expiresAt?: Date } = {},
) {
  const token = secret();
  const [row] = await knex('share_links')
    .insert({
      workspace_id: workspace.id,
      token_hash: hashSecret(token),
      target: 'scenarioId' in target ? 'scenario' : 'sweep',
      scenario_id: 'scenarioId' in target ? target.scenarioId : null,
      sweep_id: 'sweepId' in target ? target.sweepId : null,
      label: 'Fixture link',
      created_by: workspace.members.analyst.id,
      expires_at: options.expiresAt ?? new Date(Date.now() + 3_600_000),
    })
    .returning<{ id: string }[]>('id');
  if (!row) throw new Error('share link not written');
  return { id: row.id, token };
}

/** A password reset for a member written straight to the database. */
export async function writePasswordReset(knex: Knex, userId: string, options: { expiresAt?: Date } = {}) {
  const token = secret();
  await knex('password_resets').insert({
    user_id: userId,
    token_hash: hashSecret(token),
    expires_at: options.expiresAt ?? new Date(Date.now() + 3_600_000),
  });
  return token;
}

export const mailSharingFixtures: Record<string, RouteFixture> = {
  createInvitation: { prepare: async () => ({ path: '/invitations', body: { email: `invitee.${unique()}@test.example`, role: 'engineer' } }) },
  listInvitations: { prepare: async () => ({ path: '/invitations' }) },
  revokeInvitation: {
    prepare: async ({ world, target }) => {
      const { id } = await writeInvitation(world.ctx.knex, target);
      return { path: `/invitations/${world.track(target, id)}` };
    },
  },
  getInvitation: {
    prepare: async ({ world, target }) => ({ path: `/invitations/${(await writeInvitation(world.ctx.knex, target)).token}` }),
  },
  acceptInvitation: {
    prepare: async ({ world, target }) => ({
      path: `/invitations/${(await writeInvitation(world.ctx.knex, target)).token}/accept`,
      body: { displayName: 'Invited builder', password: 'a long enough secret' },
    }),
  },
  listMembers: { prepare: async () => ({ path: '/members' }) },
  updateMember: {
    // A member of their own, so the world's usual members keep their roles for the other routes.
    prepare: async ({ world, target }) => ({ path: `/members/${(await world.member(target, 'builder')).id}`, body: { role: 'analyst' } }),
  },
  requestPasswordReset: {
    prepare: async ({ world, caller }) => ({ path: '/auth/password-reset', body: { email: (await world.member(caller, 'builder')).email } }),
  },
  confirmPasswordReset: {
    // A reset ends the member's sessions: a member of its own keeps the world's tokens working.
    prepare: async ({ world, caller }) => {
      const member = await world.member(caller, 'builder');
      return { path: '/auth/password-reset/confirm', body: { token: await writePasswordReset(world.ctx.knex, member.id), newPassword: 'a fresh long secret' } };
    },
  },
  getNotifications: { prepare: async () => ({ path: '/me/notifications' }) },
  updateNotifications: { prepare: async () => ({ path: '/me/notifications', body: { sweepFinished: false } }) },

  createShareLink: {
    foreignStatus: 404,
    prepare: async ({ world, target }) => ({
      path: '/share-links',
      body: { target: 'scenario', targetId: await world.scenario(target, 'engineer'), label: 'For the customer', expiresInDays: 7 },
    }),
  },
  listShareLinks: { prepare: async () => ({ path: '/share-links' }) },
  revokeShareLink: {
    prepare: async ({ world, target }) => {
      const { id } = await writeShareLink(world.ctx.knex, target, { scenarioId: await world.scenario(target, 'engineer') });
      return { path: `/share-links/${world.track(target, id)}` };
    },
  },
  sendShareLink: {
    prepare: async ({ world, target }) => {
      const { id, token } = await writeShareLink(world.ctx.knex, target, { scenarioId: await world.scenario(target, 'engineer') });
      return { path: `/share-links/${world.track(target, id)}/send`, body: { token, email: `customer.${unique()}@test.example`, note: 'Setup for Saturday' } };
    },
  },
  getShared: {
    prepare: async ({ world, target }) => {
      const { token } = await writeShareLink(world.ctx.knex, target, { scenarioId: await world.scenario(target, 'engineer') });
      return { path: `/shared/${token}` };
    },
  },
  getSharedSurface: {
    prepare: async ({ world, target }) => {
      const sweepId = await world.sweep(target, await world.scenario(target, 'engineer'));
      const { token } = await writeShareLink(world.ctx.knex, target, { sweepId });
      return { path: `/shared/${token}/surface`, query: { x: 0, y: 1 } };
    },
  },
};
