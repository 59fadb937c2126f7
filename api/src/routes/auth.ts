import { meResponseSchema, signInBodySchema, signInResponseSchema } from '../schemas/auth.ts';
import { getMe, signIn } from '../services/auth.ts';
import { defineRoute, ROLES } from './route-def.ts';

export const authRoutes = [
  defineRoute({
    id: 'signIn',
    method: 'post',
    path: '/auth/sign-in',
    summary: 'Sign in with e-mail and password; returns a short-lived access token',
    tag: 'Account',
    access: 'public',
    scope: 'public',
    body: signInBodySchema,
    success: { status: 200, description: 'Signed in', schema: signInResponseSchema },
    errors: [429],
    limiters: ['signInPerAddress', 'signInPerAccount'],
    handler: ({ deps, body }) => signIn(deps.knex, deps.config, body),
  }),
  defineRoute({
    id: 'getMe',
    method: 'get',
    path: '/me',
    summary: 'The signed-in member and their workspace',
    tag: 'Account',
    access: ROLES.everyone,
    scope: 'self',
    success: { status: 200, description: 'The member', schema: meResponseSchema },
    handler: ({ auth }) => getMe(auth),
  }),
];
