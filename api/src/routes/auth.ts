import { Router } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { AppError, toErrorResponse } from '../errors/index.ts';
import { authenticate, authOf } from '../middleware/authenticate.ts';
import { signInBodySchema } from '../schemas/auth.ts';
import { parseInput } from '../schemas/common.ts';
import { getMe, signIn } from '../services/auth.ts';

export function authRoutes(deps: { knex: Knex; config: Config }): Router {
  const { knex, config } = deps;
  const router = Router();

  // Only failed attempts count, per address and e-mail, so guessing is slow while a shop behind one
  // address can still sign in many members.
  const signInLimiter = rateLimit({
    windowMs: 60_000,
    limit: config.signInLimitPerMinute,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => {
      const body: unknown = req.body;
      const email =
        typeof body === 'object' && body !== null && 'email' in body && typeof body.email === 'string'
          ? body.email.toLowerCase()
          : '';
      return `${ipKeyGenerator(req.ip ?? '')}|${email}`;
    },
    handler: (_req, res) => {
      const { status, body } = toErrorResponse(
        new AppError(429, 'too_many_attempts', 'Too many sign-in attempts. Wait a minute and try again.'),
      );
      res.status(status).json(body);
    },
  });

  router.post('/auth/sign-in', signInLimiter, async (req, res) => {
    res.json(await signIn(knex, config, parseInput(signInBodySchema, req.body)));
  });

  router.get('/me', authenticate(deps), async (req, res) => {
    res.json(await getMe(authOf(req)));
  });

  return router;
}
