import { z } from 'zod';
import { UNIT_SYSTEMS, USER_ROLES } from '../models/index.ts';

export const signInBodySchema = z.strictObject({
  email: z.email({ error: 'must be an e-mail address' }).max(254).transform((email) => email.toLowerCase()),
  password: z.string({ error: 'is required' }).min(1, 'is required').max(1024),
});
export type SignInBody = z.output<typeof signInBodySchema>;

export const userViewSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  displayName: z.string(),
  role: z.enum(USER_ROLES),
  unitSystem: z.enum(UNIT_SYSTEMS),
  workspace: z.object({ id: z.uuid(), name: z.string() }),
});
export type UserView = z.infer<typeof userViewSchema>;

export const signInResponseSchema = z.object({ token: z.string(), user: userViewSchema });
export type SignInResponse = z.infer<typeof signInResponseSchema>;

export const meResponseSchema = z.object({ user: userViewSchema });
