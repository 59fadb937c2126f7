import type { Router } from 'express';
import { AppError } from '../errors/index.ts';
import { buildRouter } from './build-router.ts';
import type { ApiDeps } from './route-def.ts';
import { routeTable } from './route-table.ts';

export function apiRoutes(deps: ApiDeps): Router {
  const router = buildRouter(routeTable, deps);
  router.use(() => {
    throw new AppError(404, 'not_found', 'There is no such API route.');
  });
  return router;
}

export { routeTable } from './route-table.ts';
export { allows, ownOnly, OWN_ONLY, ROLES, type AnyRoute, type Access, type Scope } from './route-def.ts';
