import { randomBytes } from 'node:crypto';
import bcrypt from 'bcryptjs';
import jwt from 'jsonwebtoken';
import type { Knex } from 'knex';
import { z } from 'zod';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { User, USER_ROLES, type UserRole } from '../models/index.ts';
import type { SignInBody, SignInResponse, UserView } from '../schemas/auth.ts';

const INVALID_CREDENTIALS = 'E-mail or password is not right.';

const claimsSchema = z.object({
  sub: z.uuid(),
  wid: z.uuid(),
  role: z.enum(USER_ROLES),
});
export type TokenClaims = z.infer<typeof claimsSchema>;

export interface AuthContext {
  userId: string;
  workspaceId: string;
  /** Re-read from the database on every request, so a demotion takes effect before the token expires. */
  role: UserRole;
  user: User;
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

export function signToken(config: Config, user: Pick<User, 'id' | 'workspaceId' | 'role'>): string {
  const claims: Omit<TokenClaims, 'sub'> = { wid: user.workspaceId, role: user.role };
  return jwt.sign(claims, config.jwtSecret, {
    algorithm: 'HS256',
    subject: user.id,
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

/** The signed-in member as the database has them now; a deleted or moved member fails. */
export async function authenticateToken(knex: Knex, config: Config, token: string): Promise<AuthContext> {
  const claims = verifyToken(config, token);
  const user = await User.query(knex)
    .findById(claims.sub)
    .where('users.workspace_id', claims.wid)
    .withGraphFetched('workspace');
  if (!user) throw AppError.unauthorized('Your account is no longer available. Sign in again.', 'invalid_token');
  return { userId: user.id, workspaceId: user.workspaceId, role: user.role, user };
}

export async function getMe(auth: AuthContext): Promise<{ user: UserView }> {
  return { user: presentUser(auth.user) };
}
