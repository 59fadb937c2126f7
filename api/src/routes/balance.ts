import { Router } from 'express';
import type { Knex } from 'knex';
import type { Config } from '../config.ts';
import { authenticate } from '../middleware/authenticate.ts';
import { parseInput } from '../schemas/common.ts';
import { balanceBodySchema } from '../schemas/scenarios.ts';
import { balanceOf } from '../services/balance.ts';

export function balanceRoutes(deps: { knex: Knex; config: Config }): Router {
  const router = Router();
  // Every role may compute a balance: it is instant, stores nothing and counts against no quota.
  router.post('/balance', authenticate(deps), (req, res) => {
    res.json(balanceOf(parseInput(balanceBodySchema, req.body).scenario));
  });
  return router;
}
