import { randomBytes, randomUUID } from 'node:crypto';
import bcrypt from 'bcryptjs';
import jwt from 'jsonwebtoken';
import type { Knex } from 'knex';
import { raw, UniqueViolationError } from 'objection';
import { z } from 'zod';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { RevokedToken, User, USER_ROLES, Workspace, type UserRole } from '../models/index.ts';
import type { ChangePasswordBody, RegisterBody, SignInBody, SignInResponse, SignOutBody, UserView } from '../schemas/auth.ts';
import { recordAudit, snapshotChanges } from './audit.ts';
import { passwordProblem } from './password-rules.ts';

const INVALID_CREDENTIALS = 'E-mail or password is not right.';
const SESSION_ENDED = 'Your session has ended. Sign in again.';

const claimsSchema = z.object({
  sub: z.uuid(),
  jti: z.uuid(),
  wid: z.uuid(),
  role: z.enum(USER_ROLES),
  tv: z.number().int().min(0),
  exp: z.number(),
});
export type TokenClaims = z.infer<typeof claimsSchema>;

export interface AuthContext {
  userId: string;
  workspaceId: string;
  /** Re-read from the database on every request, so a demotion takes effect before the token expires. */
  role: UserRole;
  user: User;
  /** This token's id and expiry, for signing out only this session. */
  tokenId: string;
  tokenExpiresAt: Date;
}

// One hash per work factor, made once, compared against when the e-mail is unknown so that a
// missing account costs the same bcrypt time as a wrong password.
const dummyHashes = new Map<number, Promise<string>>();
function dummyHash(cost: number): Promise<string> {
  let hash = dummyHashes.get(cost);
  if (!hash) {
    hash = bcrypt.hash(randomBytes(24).toString('hex'), cost);
    dummyHashes.set(cost, hash);
  }
  return hash;
}

export function hashPassword(password: string, cost: number): Promise<string> {
  return bcrypt.hash(password, cost);
}

export function signToken(config: Config, user: Pick<User, 'id' | 'workspaceId' | 'role' | 'tokenVersion'>): string {
  const claims = { wid: user.workspaceId, role: user.role, tv: user.tokenVersion };
  return jwt.sign(claims, config.jwtSecret, {
    algorithm: 'HS256',
    subject: user.id,
    jwtid: randomUUID(),
    expiresIn: config.jwtTtlSeconds,
  });
}

/** Any token problem (signature, expiry, shape) is the same 401 to the client. */
export function verifyToken(config: Config, token: string): TokenClaims {
  let payload: unknown;
  try {
    payload = jwt.verify(token, config.jwtSecret, { algorithms: ['HS256'] });
  } catch (error) {
    const expired = error instanceof jwt.TokenExpiredError;
    throw AppError.unauthorized(
      expired ? 'Your session has expired. Sign in again.' : 'Your session is not valid. Sign in again.',
      expired ? 'token_expired' : 'invalid_token',
    );
  }
  const claims = claimsSchema.safeParse(payload);
  if (!claims.success) throw AppError.unauthorized('Your session is not valid. Sign in again.', 'invalid_token');
  return claims.data;
}

export function presentUser(user: User): UserView {
  if (!user.workspace) throw new Error('presentUser needs the workspace relation loaded');
  return {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    role: user.role,
    unitSystem: user.unitSystem,
    workspace: { id: user.workspace.id, name: user.workspace.name },
  };
}

export async function signIn(knex: Knex, config: Config, input: SignInBody): Promise<SignInResponse> {
  const user = await User.query(knex).findOne({ email: input.email }).withGraphFetched('workspace');
  const matches = await bcrypt.compare(input.password, user?.passwordHash ?? (await dummyHash(config.bcryptCost)));
  if (!user || !matches) throw AppError.unauthorized(INVALID_CREDENTIALS, 'invalid_credentials');
  return { token: signToken(config, user), user: presentUser(user) };
}

/**
 * The signed-in member as the database has them now. One query answers it all: the member still
 * exists in the token's workspace, the token's version is current, and this token was not signed out.
 */
export async function authenticateToken(knex: Knex, config: Config, token: string): Promise<AuthContext> {
  const claims = verifyToken(config, token);
  const user = await User.query(knex)
    .findById(claims.sub)
    .where('users.workspace_id', claims.wid)
    .where('users.token_version', claims.tv)
    .whereNotExists(RevokedToken.query(knex).where('revoked_tokens.token_id', claims.jti))
    .withGraphFetched('workspace');
  if (!user) throw AppError.unauthorized(SESSION_ENDED, 'invalid_token');
  return {
    userId: user.id,
    workspaceId: user.workspaceId,
    role: user.role,
    user,
    tokenId: claims.jti,
    tokenExpiresAt: new Date(claims.exp * 1000),
  };
}

export async function getMe(auth: AuthContext): Promise<{ user: UserView }> {
  return { user: presentUser(auth.user) };
}

/** A slug people can read, made unique by a random tail rather than by a retry loop. */
function slugFor(name: string): string {
  const base = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 48);
  return `${base || 'workspace'}-${randomBytes(3).toString('hex')}`;
}

/** A new workspace and its first member, an admin; both or neither. */
export async function register(knex: Knex, config: Config, input: RegisterBody): Promise<SignInResponse> {
  const passwordHash = await hashPassword(input.password, config.bcryptCost);
  const user = await knex.transaction(async (trx) => {
    const taken = await User.query(trx).findOne({ email: input.email }).select('id');
    if (taken) throw emailTaken();
    const workspace = await Workspace.query(trx).insertAndFetch({ name: input.workspaceName, slug: slugFor(input.workspaceName) });
    const member = await User.query(trx)
      .insertAndFetch({
        workspaceId: workspace.id,
        email: input.email,
        passwordHash,
        displayName: input.displayName,
        role: 'admin',
        unitSystem: input.unitSystem,
      })
      .catch((error: unknown) => {
        // Two registrations of one e-mail at the same instant: the unique index decides.
        throw error instanceof UniqueViolationError ? emailTaken() : error;
      });
    member.workspace = workspace;
    await recordAudit(trx, {
      workspaceId: workspace.id,
      actorId: member.id,
      action: 'register',
      entityType: 'workspace',
      entityId: workspace.id,
      changes: snapshotChanges({ name: workspace.name, adminEmail: member.email, adminDisplayName: member.displayName }, 'to'),
    });
    return member;
  });
  return { token: signToken(config, user), user: presentUser(user) };
}

function emailTaken(): AppError {
  return new AppError(409, 'email_taken', 'An account with this e-mail already exists. Sign in instead.', {
    email: 'is already registered',
  });
}

/** Ends this session, or every session of the member. */
export async function signOut(knex: Knex, auth: AuthContext, input: SignOutBody): Promise<void> {
  if (input.everywhere) {
    await User.query(knex).findById(auth.userId).patch({ tokenVersion: raw('token_version + 1') });
    return;
  }
  await knex.transaction(async (trx) => {
    await RevokedToken.query(trx)
      .insert({ tokenId: auth.tokenId, userId: auth.userId, expiresAt: auth.tokenExpiresAt })
      .onConflict('token_id')
      .ignore();
    // Tokens past their expiry are refused by their signature check already; their rows can go.
    await RevokedToken.query(trx).where('expires_at', '<', new Date()).delete();
  });
}

/**
 * A new password ends every other session (the token version rises); the caller gets a fresh token so
 * the browser that made the change stays signed in.
 */
export async function changePassword(
  knex: Knex,
  config: Config,
  auth: AuthContext,
  input: ChangePasswordBody,
): Promise<SignInResponse> {
  const current = await User.query(knex).findById(auth.userId).withGraphFetched('workspace');
  if (!current) throw AppError.unauthorized(SESSION_ENDED, 'invalid_token');
  if (!(await bcrypt.compare(input.currentPassword, current.passwordHash))) {
    throw new AppError(422, 'wrong_password', 'The current password is not right.', { currentPassword: 'is not right' });
  }
  const problem =
    passwordProblem(input.newPassword, current.email) ??
    (input.newPassword === input.currentPassword ? 'must differ from the current password' : undefined);
  if (problem) throw AppError.validation({ newPassword: problem }, 'The new password cannot be used.');

  const passwordHash = await hashPassword(input.newPassword, config.bcryptCost);
  const updated = await knex.transaction(async (trx) => {
    const [row] = await User.query(trx)
      .where('users.id', auth.userId)
      .patch({ passwordHash, tokenVersion: raw('token_version + 1') })
      .returning('*');
    if (!row) throw AppError.unauthorized(SESSION_ENDED, 'invalid_token');
    // That the password changed, and by whom; never the password or its hash.
    await recordAudit(trx, {
      workspaceId: row.workspaceId,
      actorId: row.id,
      action: 'change_password',
      entityType: 'user',
      entityId: row.id,
      changes: {},
    });
    return row;
  });
  updated.workspace = current.workspace;
  return { token: signToken(config, updated), user: presentUser(updated) };
}
