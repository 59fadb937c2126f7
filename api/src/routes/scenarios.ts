import { idParamsSchema, paginationQuerySchema } from '../schemas/common.ts';
import {
  createScenarioBodySchema,
  scenarioListSchema,
  scenarioResponseSchema,
  updateScenarioBodySchema,
} from '../schemas/scenarios.ts';
import { createScenario, getScenario, listScenarios, updateScenario } from '../services/scenarios.ts';
import { defineRoute, ROLES } from './route-def.ts';

export const scenarioRoutes = [
  defineRoute({
    id: 'listScenarios',
    method: 'get',
    path: '/scenarios',
    summary: "The workspace's scenarios, most recently changed first",
    tag: 'Scenarios',
    access: ROLES.everyone,
    scope: 'collection',
    query: paginationQuerySchema,
    success: { status: 200, description: 'One page of scenarios', schema: scenarioListSchema },
    handler: ({ deps, auth, query }) => listScenarios(deps.knex, auth.workspaceId, query),
  }),
  defineRoute({
    id: 'getScenario',
    method: 'get',
    path: '/scenarios/:id',
    summary: 'One scenario',
    tag: 'Scenarios',
    access: ROLES.everyone,
    scope: 'object',
    resource: 'Scenario',
    params: idParamsSchema,
    success: { status: 200, description: 'The scenario', schema: scenarioResponseSchema },
    handler: async ({ deps, auth, params }) => ({ scenario: await getScenario(deps.knex, auth.workspaceId, params.id) }),
  }),
  defineRoute({
    id: 'createScenario',
    method: 'post',
    path: '/scenarios',
    summary: 'Create a scenario (the default scenario when data is left out)',
    tag: 'Scenarios',
    access: ROLES.compute,
    scope: 'collection',
    body: createScenarioBodySchema,
    success: { status: 201, description: 'Created', schema: scenarioResponseSchema },
    handler: async ({ deps, auth, body }) => ({ scenario: await createScenario(deps.knex, auth, body) }),
  }),
  defineRoute({
    id: 'updateScenario',
    method: 'patch',
    path: '/scenarios/:id',
    summary: 'Rename or change a scenario; the version must be the one last read',
    tag: 'Scenarios',
    access: ROLES.compute,
    scope: 'object',
    resource: 'Scenario',
    params: idParamsSchema,
    body: updateScenarioBodySchema,
    success: { status: 200, description: 'Changed, with the version one higher', schema: scenarioResponseSchema },
    errors: [409],
    handler: async ({ deps, auth, params, body }) => ({ scenario: await updateScenario(deps.knex, auth, params.id, body) }),
  }),
];
