import { authRoutes } from './auth.ts';
import { balanceRoutes } from './balance.ts';
import { billingRoutes } from './billing.ts';
import { datalogRoutes } from './datalogs.ts';
import { healthRoutes } from './health.ts';
import { libraryRoutes } from './library.ts';
import { openApiRoutes } from './openapi.ts';
import { queueHealthRoutes } from './queue-health.ts';
import type { AnyRoute } from './route-def.ts';
import { scenarioRoutes } from './scenarios.ts';
import { sharingRoutes } from './sharing.ts';
import { sweepResultRoutes } from './sweep-results.ts';
import { sweepRoutes } from './sweeps.ts';
import { teamRoutes } from './team.ts';
import { usageRoutes } from './usage.ts';

/**
 * Every route of the API. The router, the OpenAPI document and the authorization matrix are all built
 * from this list, so a route cannot exist without its roles, its schemas and its tests.
 */
export const routeTable: readonly AnyRoute[] = [
  ...healthRoutes,
  ...openApiRoutes,
  ...authRoutes,
  ...scenarioRoutes,
  ...balanceRoutes,
  ...sweepRoutes,
  ...sweepResultRoutes,
  ...libraryRoutes,
  ...billingRoutes,
  ...datalogRoutes,
  ...usageRoutes,
  ...queueHealthRoutes,
  ...teamRoutes,
  ...sharingRoutes,
];
