import type { Knex } from 'knex';
import { UniqueViolationError } from 'objection';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { Invitation, User, Workspace } from '../models/index.ts';
import type { SignInResponse } from '../schemas/auth.ts';
import type { AcceptInvitationBody, CreateInvitationBody, InvitationView } from '../schemas/team.ts';
import type { AuthContext } from './auth.ts';
import { hashPassword, presentUser, signToken } from './auth.ts';
import { recordAudit } from './audit.ts';
import { composeMail } from './mail/compose.ts';
import { sendMail } from './mail/mailer.ts';
import { passwordProblem } from './password-rules.ts';
import { hashSecret, newSecret } from './secret-token.ts';

/** An invitation link works for a week. */
export const INVITATION_TTL_MS = 7 * 24 * 3600 * 1000;

const ROLE_WORDS: Record<string, string> = {
  admin: 'an admin (members, roles, quotas and everything engineers do)',
  engineer: 'an engineer (the shared hardware library, scenarios, pulls and sweeps)',
  builder: 'a builder (your own scenarios, pulls and sweeps)',
  analyst: 'an analyst (read everything, compare, export and share links)',
};

type InvitationRow = Invitation & { invitedByName?: string | null };

function statusOf(invitation: Invitation, now = new Date()): InvitationView['status'] {
  if (invitation.acceptedAt) return 'accepted';
  if (invitation.revokedAt) return 'revoked';
  return invitation.expiresAt <= now ? 'expired' : 'open';
}

function present(invitation: InvitationRow): InvitationView {
  return {
    id: invitation.id,
    email: invitation.email,
    role: invitation.role,
    status: statusOf(invitation),
    invitedBy: invitation.invitedByName ?? null,
    createdAt: invitation.createdAt.toISOString(),
    expiresAt: invitation.expiresAt.toISOString(),
    acceptedAt: invitation.acceptedAt ? invitation.acceptedAt.toISOString() : null,
    revokedAt: invitation.revokedAt ? invitation.revokedAt.toISOString() : null,
  };
}

function withInviter(knex: Knex) {
  return Invitation.query(knex)
    .select('invitations.*', 'inviter.display_name as invited_by_name')
    .leftJoin('users as inviter', 'inviter.id', 'invitations.invited_by');
}

function emailTaken(): AppError {
  return new AppError(409, 'email_taken', 'Someone already has a Crackpoint account with this e-mail.', { email: 'already has an account' });
}

/**
 * Writes the invitation and e-mails its link in one transaction: if the mail server refuses, nothing is
 * kept. An open invitation to the same address is replaced (revoked), so "send again" is a new invitation.
 */
export async function createInvitation(knex: Knex, config: Config, auth: AuthContext, input: CreateInvitationBody): Promise<InvitationView> {
  const { secret, hash } = newSecret();
  const workspace = auth.user.workspace ?? (await Workspace.query(knex).findById(auth.workspaceId));
  if (!workspace) throw AppError.unauthorized();
  const invitation = await knex.transaction(async (trx) => {
    if (await User.query(trx).findOne({ email: input.email }).select('id')) throw emailTaken();
    const replaced = await Invitation.query(trx)
      .where({ workspace_id: auth.workspaceId, email: input.email })
      .whereNull('accepted_at')
      .whereNull('revoked_at')
      .patch({ revokedAt: new Date() })
      .returning('id');
    const created = await Invitation.query(trx)
      .insertAndFetch({
        workspaceId: auth.workspaceId,
        email: input.email,
        role: input.role,
        tokenHash: hash,
        invitedBy: auth.userId,
        expiresAt: new Date(Date.now() + INVITATION_TTL_MS),
      })
      .catch((error: unknown) => {
        throw error instanceof UniqueViolationError ? AppError.conflict('invitation_open', 'An invitation to this address is being sent already.') : error;
      });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'invite',
      entityType: 'invitation',
      entityId: created.id,
      changes: {
        email: { to: input.email },
        role: { to: input.role },
        ...(Array.isArray(replaced) && replaced.length > 0 ? { replaced: { to: replaced.length } } : {}),
      },
    });
    const link = `${config.publicUrl}/invitations/${secret}`;
    await sendMail(
      config,
      composeMail({
        to: input.email,
        subject: `${auth.user.displayName} invites you to ${workspace.name} on Crackpoint`,
        lead: [
          `${auth.user.displayName} would like you to join the workspace "${workspace.name}" on Crackpoint as ${ROLE_WORDS[input.role] ?? input.role}.`,
          'Crackpoint predicts crack and full-open boost for wastegate springs and port arrangements, simulates pulls and sweeps whole ranges of settings.',
        ],
        action: { label: 'Accept the invitation', url: link },
        after: [
          `The link works once, for 7 days. If you did not expect this, ignore the message: nothing happens without the link.`,
        ],
      }),
    );
    return created;
  });
  return present({ ...invitation, invitedByName: auth.user.displayName } as InvitationRow);
}

export async function listInvitations(knex: Knex, workspaceId: string): Promise<{ items: InvitationView[] }> {
  const rows = (await withInviter(knex)
    .where('invitations.workspace_id', workspaceId)
    .orderBy('invitations.created_at', 'desc')
    .limit(500)) as InvitationRow[];
  return { items: rows.map(present) };
}

/** A revoked link stops working at once; an accepted invitation is history and cannot be revoked. */
export async function revokeInvitation(knex: Knex, auth: AuthContext, id: string): Promise<void> {
  await knex.transaction(async (trx) => {
    const invitation = await Invitation.query(trx).where({ workspace_id: auth.workspaceId }).findById(id).forUpdate();
    if (!invitation) throw AppError.notFound('Invitation');
    if (invitation.acceptedAt) throw AppError.conflict('invitation_accepted', 'This invitation was accepted already; change the member’s role instead.');
    if (invitation.revokedAt) return;
    await Invitation.query(trx).findById(id).patch({ revokedAt: new Date() });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'revoke',
      entityType: 'invitation',
      entityId: id,
      changes: { email: { from: invitation.email } },
    });
  });
}

/** The invitation a link names, if it can still be accepted; every other case is the same 404. */
async function openInvitation(knex: Knex, secret: string, lock: boolean): Promise<Invitation> {
  const query = Invitation.query(knex)
    .findOne({ token_hash: hashSecret(secret) })
    .whereNull('accepted_at')
    .whereNull('revoked_at')
    .where('expires_at', '>', new Date());
  const invitation = await (lock ? query.forUpdate() : query);
  if (!invitation) {
    throw new AppError(404, 'not_found', 'This invitation link is not valid any more. Ask your workspace admin for a new one.');
  }
  return invitation;
}

export async function previewInvitation(knex: Knex, secret: string) {
  const invitation = await openInvitation(knex, secret, false);
  const workspace = await Workspace.query(knex).findById(invitation.workspaceId);
  if (!workspace) throw AppError.notFound('Invitation');
  return {
    invitation: { workspaceName: workspace.name, email: invitation.email, role: invitation.role, expiresAt: invitation.expiresAt.toISOString() },
  };
}

/** Creates the member and marks the invitation used, together; the new member is signed in. */
export async function acceptInvitation(knex: Knex, config: Config, secret: string, input: AcceptInvitationBody): Promise<SignInResponse> {
  const member = await knex.transaction(async (trx) => {
    // The row lock makes two accepts of one link at the same instant take turns: the second finds it used.
    const invitation = await openInvitation(trx, secret, true);
    const problem = passwordProblem(input.password, invitation.email);
    if (problem) throw AppError.validation({ password: problem }, 'This password cannot be used.');
    if (await User.query(trx).findOne({ email: invitation.email }).select('id')) throw emailTaken();
    const passwordHash = await hashPassword(input.password, config.bcryptCost);
    const user = await User.query(trx)
      .insertAndFetch({
        workspaceId: invitation.workspaceId,
        email: invitation.email,
        passwordHash,
        displayName: input.displayName,
        role: invitation.role,
      })
      .catch((error: unknown) => {
        throw error instanceof UniqueViolationError ? emailTaken() : error;
      });
    await Invitation.query(trx).findById(invitation.id).patch({ acceptedAt: new Date(), acceptedUserId: user.id });
    await recordAudit(trx, {
      workspaceId: invitation.workspaceId,
      actorId: user.id,
      action: 'accept_invitation',
      entityType: 'user',
      entityId: user.id,
      changes: { email: { to: user.email }, role: { to: user.role }, displayName: { to: user.displayName } },
    });
    return user;
  });
  if (!member.workspace) member.workspace = await Workspace.query(knex).findById(member.workspaceId);
  return { token: signToken(config, member), user: presentUser(member) };
}
