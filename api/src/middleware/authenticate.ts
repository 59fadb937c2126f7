import type { RequestHandler } from 'express';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError } from '../errors/index.ts';
import type { UserRole } from '../models/index.ts';
import { authenticateToken, type AuthContext } from '../services/auth.ts';

declare module 'express-serve-static-core' {
  interface Request {
    auth?: AuthContext;
  }
}

export function authenticate(deps: { knex: Knex; config: Config }): RequestHandler {
  return async (req, _res, next) => {
    const header = req.get('authorization') ?? '';
    const match = /^Bearer\s+(\S+)$/i.exec(header);
    if (!match?.[1]) throw AppError.unauthorized();
    req.auth = await authenticateToken(deps.knex, deps.config, match[1]);
    next();
  };
}

/** Runs after authenticate; the role checked is the one just read from the database. */
export function requireRole(...roles: UserRole[]): RequestHandler {
  return (req, _res, next) => {
    if (!req.auth) throw AppError.unauthorized();
    if (!roles.includes(req.auth.role)) throw AppError.forbidden();
    next();
  };
}

/** The signed-in member for a handler mounted behind authenticate. */
export function authOf(req: { auth?: AuthContext }): AuthContext {
  if (!req.auth) throw AppError.unauthorized();
  return req.auth;
}
