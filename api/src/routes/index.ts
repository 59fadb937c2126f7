import { Router } from 'express';
import { AppError } from '../errors/index.ts';
import type { SweepDeps } from '../services/sweeps.ts';
import { authRoutes } from './auth.ts';
import { balanceRoutes } from './balance.ts';
import { healthRoutes } from './health.ts';
import { scenarioRoutes } from './scenarios.ts';
import { sweepRoutes } from './sweeps.ts';

export function apiRoutes(deps: SweepDeps): Router {
  const router = Router();
  router.use(healthRoutes(deps.knex, deps.queue));
  router.use(authRoutes(deps));
  router.use(scenarioRoutes(deps));
  router.use(balanceRoutes(deps));
  router.use(sweepRoutes(deps));
  router.use(() => {
    throw new AppError(404, 'not_found', 'There is no such API route.');
  });
  return router;
}
