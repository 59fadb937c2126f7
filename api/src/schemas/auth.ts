import { z } from 'zod';
import { UNIT_SYSTEMS, USER_ROLES } from '../models/index.ts';
import { passwordProblem } from '../services/password-rules.ts';

const emailSchema = z
  .email({ error: 'must be an e-mail address' })
  .max(254, 'must be at most 254 characters')
  .transform((email) => email.toLowerCase());

const textSchema = (max: number) =>
  z
    .string({ error: 'is required' })
    .trim()
    .min(1, 'must not be empty')
    .max(max, `must be at most ${max} characters`);

/** The rules that need only the password; the one about the e-mail is checked where the e-mail is known. */
const newPasswordSchema = z.string({ error: 'is required' }).superRefine((password, ctx) => {
  const problem = passwordProblem(password, undefined);
  if (problem) ctx.addIssue({ code: 'custom', message: problem });
});

export const signInBodySchema = z.strictObject({
  email: emailSchema,
  password: z.string({ error: 'is required' }).min(1, 'is required').max(1024, 'must be at most 1024 characters'),
});
export type SignInBody = z.output<typeof signInBodySchema>;

export const registerBodySchema = z
  .strictObject({
    workspaceName: textSchema(120),
    displayName: textSchema(120),
    email: emailSchema,
    password: newPasswordSchema,
    unitSystem: z.enum(UNIT_SYSTEMS, { error: 'must be us or metric' }).default('us'),
  })
  .superRefine((body, ctx) => {
    if (passwordProblem(body.password, body.email) === 'must not be your e-mail address') {
      ctx.addIssue({ code: 'custom', path: ['password'], message: 'must not be your e-mail address' });
    }
  });
export type RegisterBody = z.output<typeof registerBodySchema>;

export const signOutBodySchema = z.strictObject({
  /** End every session of the member, not only this one. */
  everywhere: z.boolean({ error: 'must be true or false' }).default(false),
});
export type SignOutBody = z.output<typeof signOutBodySchema>;

export const changePasswordBodySchema = z.strictObject({
  currentPassword: z.string({ error: 'is required' }).min(1, 'is required').max(1024, 'must be at most 1024 characters'),
  newPassword: newPasswordSchema,
});
export type ChangePasswordBody = z.output<typeof changePasswordBodySchema>;

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
