import {
  memberQuotaBodySchema,
  memberQuotaParamsSchema,
  quotasResponseSchema,
  usageQuerySchema,
  usageResponseSchema,
  workspaceQuotaBodySchema,
} from '../schemas/usage.ts';
import { getQuotas, setMemberQuota, setWorkspaceQuota } from '../services/quotas.ts';
import { getUsage } from '../services/usage.ts';
import { defineRoute, ROLES } from './route-def.ts';

/** Quotas are the admin's (DESIGN.md's roles table). */
const ADMINS = ['admin'] as const;

export const usageRoutes = [
  defineRoute({
    id: 'getQuotas',
    method: 'get',
    path: '/quotas',
    summary: "The workspace's monthly compute quota and each member's own limit",
    tag: 'Usage',
    access: ADMINS,
    scope: 'collection',
    success: { status: 200, description: 'The quotas', schema: quotasResponseSchema },
    handler: async ({ deps, auth }) => ({ quotas: await getQuotas(deps.knex, deps.config, auth.workspaceId) }),
  }),
  defineRoute({
    id: 'setWorkspaceQuota',
    method: 'put',
    path: '/quotas/workspace',
    summary: "Set the workspace's monthly compute quota (compute units per UTC month)",
    tag: 'Usage',
    access: ADMINS,
    scope: 'collection',
    body: workspaceQuotaBodySchema,
    success: { status: 200, description: 'The quotas after the change', schema: quotasResponseSchema },
    handler: async ({ deps, auth, body }) => ({ quotas: await setWorkspaceQuota(deps, auth, body.monthlyComputeUnits) }),
  }),
  defineRoute({
    id: 'setMemberQuota',
    method: 'put',
    path: '/quotas/members/:userId',
    summary: "Set a member's own monthly compute limit, or remove it with null",
    tag: 'Usage',
    access: ADMINS,
    scope: 'object',
    resource: 'Member',
    params: memberQuotaParamsSchema,
    body: memberQuotaBodySchema,
    success: { status: 200, description: 'The quotas after the change', schema: quotasResponseSchema },
    handler: async ({ deps, auth, params, body }) => ({ quotas: await setMemberQuota(deps, auth, params.userId, body.monthlyComputeUnits) }),
  }),
  defineRoute({
    id: 'getUsage',
    method: 'get',
    path: '/usage',
    summary: "A month's compute usage: the caller's own and, for admins, every member's and the workspace's",
    tag: 'Usage',
    access: ROLES.everyone,
    scope: 'collection',
    query: usageQuerySchema,
    success: { status: 200, description: 'Usage of the month', schema: usageResponseSchema },
    handler: async ({ deps, auth, query }) => ({ usage: await getUsage(deps, auth, query) }),
  }),
];
