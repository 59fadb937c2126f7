import { balanceBodySchema, balanceResponseSchema } from '../schemas/balance.ts';
import { balanceOf } from '../services/balance.ts';
import { defineRoute, ROLES } from './route-def.ts';

export const balanceRoutes = [
  defineRoute({
    id: 'computeBalance',
    method: 'post',
    path: '/balance',
    summary: 'Static force balance (crack and full-open boost) of a scenario sent in the body',
    tag: 'Scenarios',
    // Every role: it is instant, stores nothing and counts against no quota.
    access: ROLES.everyone,
    scope: 'self',
    body: balanceBodySchema,
    success: { status: 200, description: 'The balance', schema: balanceResponseSchema },
    handler: ({ body }) => balanceOf(body.scenario),
  }),
];
