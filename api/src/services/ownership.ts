import { AppError } from '../errors/index.ts';
import { OWN_ONLY } from '../routes/route-def.ts';
import type { AuthContext } from './auth.ts';

/**
 * Builders act on their own compute and records (routes' `ownOnly`, route-def.ts): a builder naming another
 * member's scenario, sweep or datalog gets 403 saying so. `ownerId` is the record's owner or creator (null when
 * that member has left, which is nobody's own).
 */
export function assertOwnRecord(auth: Pick<AuthContext, 'role' | 'userId'>, ownerId: string | null, message: string): void {
  if (OWN_ONLY.includes(auth.role) && ownerId !== auth.userId) throw AppError.forbidden(message);
}
