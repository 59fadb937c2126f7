import type { Knex } from 'knex';
import type { Logger } from 'pino';
import { raw } from 'objection';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { PasswordReset, User } from '../models/index.ts';
import type { SignInResponse } from '../schemas/auth.ts';
import type { PasswordResetConfirmBody, PasswordResetRequestBody } from '../schemas/team.ts';
import { hashPassword, presentUser, signToken } from './auth.ts';
import { recordAudit } from './audit.ts';
import { composeMail } from './mail/compose.ts';
import { sendMail } from './mail/mailer.ts';
import { passwordProblem } from './password-rules.ts';
import { hashSecret, newSecret } from './secret-token.ts';

/** A reset link works for an hour. */
export const PASSWORD_RESET_TTL_MS = 3600 * 1000;

export const RESET_REQUESTED_MESSAGE =
  'If an account uses this e-mail, a link to set a new password is on its way. It works once, for one hour.';

/**
 * The answer is the same whether or not the address has an account, so the form cannot be used to find
 * out who has one. The row is written before answering (so a retry sees it); the e-mail goes after the
 * answer, so the answer takes about as long either way. A mail failure is logged; the person can ask again.
 */
export async function requestPasswordReset(
  knex: Knex,
  config: Config,
  logger: Logger,
  input: PasswordResetRequestBody,
): Promise<{ message: string }> {
  const user = await User.query(knex).findOne({ email: input.email });
  if (user) {
    const { secret, hash } = newSecret();
    await knex.transaction(async (trx) => {
      // Only the newest link works: asking again voids the ones before.
      await PasswordReset.query(trx).where({ user_id: user.id }).whereNull('used_at').patch({ usedAt: new Date() });
      await PasswordReset.query(trx).insert({ userId: user.id, tokenHash: hash, expiresAt: new Date(Date.now() + PASSWORD_RESET_TTL_MS) });
    });
    const link = `${config.publicUrl}/reset-password/${secret}`;
    const message = composeMail({
      to: user.email,
      subject: 'Set a new Crackpoint password',
      lead: [`Someone asked to set a new password for the Crackpoint account ${user.email}.`, 'To choose a new one, open the link below.'],
      action: { label: 'Set a new password', url: link },
      after: [
        'The link works once, for one hour. Setting a new password signs the account out everywhere.',
        'If you did not ask for this, ignore the message: your password stays as it is.',
      ],
    });
    void sendMail(config, message).catch((error: unknown) => logger.warn({ err: error, userId: user.id }, 'password reset e-mail not sent'));
  }
  return { message: RESET_REQUESTED_MESSAGE };
}

/**
 * Sets the new password, marks the link used and raises the token version (every existing session
 * ends), together. The new password's session is returned so the browser is signed in.
 */
export async function confirmPasswordReset(knex: Knex, config: Config, input: PasswordResetConfirmBody): Promise<SignInResponse> {
  const updated = await knex.transaction(async (trx) => {
    const reset = await PasswordReset.query(trx).findOne({ token_hash: hashSecret(input.token) }).forUpdate();
    if (!reset) throw new AppError(404, 'not_found', 'This reset link is not known. Ask for a new one from the sign-in page.');
    if (reset.usedAt) {
      throw new AppError(410, 'reset_link_used', 'This reset link was used already (or a newer one was sent). Ask for a new one from the sign-in page.');
    }
    if (reset.expiresAt <= new Date()) {
      throw new AppError(410, 'reset_link_expired', 'This reset link has expired. Ask for a new one from the sign-in page.');
    }
    const user = await User.query(trx).findById(reset.userId);
    if (!user) throw new AppError(404, 'not_found', 'This reset link is not known. Ask for a new one from the sign-in page.');
    const problem = passwordProblem(input.newPassword, user.email);
    if (problem) throw AppError.validation({ newPassword: problem }, 'The new password cannot be used.');

    const passwordHash = await hashPassword(input.newPassword, config.bcryptCost);
    await PasswordReset.query(trx).findById(reset.id).patch({ usedAt: new Date() });
    const [row] = await User.query(trx)
      .where('users.id', user.id)
      .patch({ passwordHash, tokenVersion: raw('token_version + 1') })
      .returning('*');
    if (!row) throw new AppError(404, 'not_found', 'This reset link is not known.');
    await recordAudit(trx, {
      workspaceId: row.workspaceId,
      actorId: row.id,
      action: 'reset_password',
      entityType: 'user',
      entityId: row.id,
      changes: {},
    });
    return row;
  });
  const withWorkspace = await User.query(knex).findById(updated.id).withGraphFetched('workspace');
  if (!withWorkspace) throw new AppError(404, 'not_found', 'This reset link is not known.');
  return { token: signToken(config, withWorkspace), user: presentUser(withWorkspace) };
}
