import { z } from 'zod';
import { USER_ROLES } from '../models/index.ts';
import { SECRET_PATTERN } from '../services/secret-token.ts';
import { passwordProblem } from '../services/password-rules.ts';
import { userViewSchema } from './auth.ts';

export const emailSchema = z
  .email({ error: 'must be an e-mail address' })
  .max(254, 'must be at most 254 characters')
  .transform((email) => email.toLowerCase());

const roleSchema = z.enum(USER_ROLES, { error: `must be one of ${USER_ROLES.join(', ')}` });

/** A secret from an e-mailed or shared link; anything else cannot name one and is refused at the edge. */
export const secretSchema = z.string({ error: 'is required' }).regex(SECRET_PATTERN, 'must be the 43-character code from the link');
export const secretParamsSchema = z.strictObject({ token: secretSchema });

const newPasswordSchema = z.string({ error: 'is required' }).superRefine((password, ctx) => {
  const problem = passwordProblem(password, undefined);
  if (problem) ctx.addIssue({ code: 'custom', message: problem });
});

export const createInvitationBodySchema = z.strictObject({
  email: emailSchema,
  role: roleSchema,
});
export type CreateInvitationBody = z.output<typeof createInvitationBodySchema>;

export const INVITATION_STATUSES = ['open', 'accepted', 'revoked', 'expired'] as const;

export const invitationViewSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  role: roleSchema,
  status: z.enum(INVITATION_STATUSES),
  invitedBy: z.string().nullable(),
  createdAt: z.string(),
  expiresAt: z.string(),
  acceptedAt: z.string().nullable(),
  revokedAt: z.string().nullable(),
});
export type InvitationView = z.infer<typeof invitationViewSchema>;
export const invitationResponseSchema = z.object({ invitation: invitationViewSchema });
export const invitationListSchema = z.object({ items: z.array(invitationViewSchema) });

/** What the person holding an invitation link is shown before they accept. */
export const invitationPreviewSchema = z.object({
  invitation: z.object({ workspaceName: z.string(), email: z.string(), role: roleSchema, expiresAt: z.string() }),
});

export const acceptInvitationBodySchema = z.strictObject({
  displayName: z.string({ error: 'is required' }).trim().min(1, 'must not be empty').max(120, 'must be at most 120 characters'),
  password: newPasswordSchema,
});
export type AcceptInvitationBody = z.output<typeof acceptInvitationBodySchema>;

export const memberViewSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  displayName: z.string(),
  role: roleSchema,
  createdAt: z.string(),
});
export type MemberView = z.infer<typeof memberViewSchema>;
export const memberListSchema = z.object({ items: z.array(memberViewSchema) });
export const memberResponseSchema = z.object({ member: memberViewSchema });

export const updateMemberBodySchema = z.strictObject({ role: roleSchema });
export type UpdateMemberBody = z.output<typeof updateMemberBodySchema>;

export const passwordResetRequestBodySchema = z.strictObject({ email: emailSchema });
export type PasswordResetRequestBody = z.output<typeof passwordResetRequestBodySchema>;
export const passwordResetAcceptedSchema = z.object({ message: z.string() });

export const passwordResetConfirmBodySchema = z.strictObject({
  token: secretSchema,
  newPassword: newPasswordSchema,
});
export type PasswordResetConfirmBody = z.output<typeof passwordResetConfirmBodySchema>;

export const notificationsSchema = z.object({
  notifications: z.object({ sweepFinished: z.boolean() }),
});
export type NotificationsView = z.infer<typeof notificationsSchema>;
export const updateNotificationsBodySchema = z.strictObject({
  sweepFinished: z.boolean({ error: 'must be true or false' }),
});
export type UpdateNotificationsBody = z.output<typeof updateNotificationsBodySchema>;

export { userViewSchema };
