import type { Request } from 'express';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import { authenticateToken, type AuthContext } from '../services/auth.ts';

declare module 'express-serve-static-core' {
  interface Request {
    auth?: AuthContext;
  }
}

/** The member behind the request's bearer token, as the database has them now; anything else is a 401. */
export async function authenticateRequest(deps: { knex: Knex; config: Config }, req: Request): Promise<AuthContext> {
  const header = req.get('authorization') ?? '';
  const match = /^Bearer\s+(\S+)$/i.exec(header);
  if (!match?.[1]) throw AppError.unauthorized();
  return authenticateToken(deps.knex, deps.config, match[1]);
}
