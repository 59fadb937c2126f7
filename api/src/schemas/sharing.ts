import { z } from 'zod';
import { SHARE_TARGETS } from '../models/index.ts';
import { uuidSchema } from './common.ts';
import { emailSchema, secretSchema } from './team.ts';
import { surfaceQuerySchema, surfaceSchema } from './sweeps.ts';

const targetSchema = z.enum(SHARE_TARGETS, { error: 'must be scenario or sweep' });

export const SHARE_MAX_DAYS = 365;

export const createShareLinkBodySchema = z.strictObject({
  target: targetSchema,
  /** The scenario's or the sweep's id, as `target` says. */
  targetId: uuidSchema,
  label: z.string({ error: 'must be text' }).trim().max(120, 'must be at most 120 characters').default(''),
  expiresInDays: z.number({ error: 'must be a number of days' }).int('must be a whole number of days').min(1).max(SHARE_MAX_DAYS).default(14),
});
export type CreateShareLinkBody = z.output<typeof createShareLinkBodySchema>;

export const listShareLinksQuerySchema = z.object({
  target: targetSchema.optional(),
  targetId: uuidSchema.optional(),
});
export type ListShareLinksQuery = z.output<typeof listShareLinksQuerySchema>;

export const SHARE_STATUSES = ['active', 'expired', 'revoked'] as const;

export const shareLinkViewSchema = z.object({
  id: z.uuid(),
  target: targetSchema,
  targetId: z.uuid(),
  targetName: z.string(),
  label: z.string(),
  status: z.enum(SHARE_STATUSES),
  createdBy: z.string().nullable(),
  createdAt: z.string(),
  expiresAt: z.string(),
  revokedAt: z.string().nullable(),
  lastUsedAt: z.string().nullable(),
  useCount: z.number().int(),
});
export type ShareLinkView = z.infer<typeof shareLinkViewSchema>;
export const shareLinkListSchema = z.object({ items: z.array(shareLinkViewSchema) });
export const createdShareLinkSchema = z.object({
  shareLink: shareLinkViewSchema,
  /** Shown this once; only its hash is kept. */
  token: z.string(),
  url: z.string(),
});

export const sendShareLinkBodySchema = z.strictObject({
  /** The link's secret, which only the member who just made it holds. */
  token: secretSchema,
  email: emailSchema,
  note: z.string({ error: 'must be text' }).trim().max(500, 'must be at most 500 characters').default(''),
});
export type SendShareLinkBody = z.output<typeof sendShareLinkBodySchema>;
export const sentShareLinkSchema = z.object({ sentTo: z.string(), note: z.string() });

const axisSchema = z.object({ path: z.string(), values: z.array(z.number()) });

export const sharedViewSchema = z.object({
  share: z.object({
    target: targetSchema,
    label: z.string(),
    workspaceName: z.string(),
    expiresAt: z.string(),
  }),
  scenario: z
    .object({
      name: z.string(),
      updatedAt: z.string(),
      /** The stored scenario, SI units as sim-core defines them. */
      data: z.record(z.string(), z.unknown()),
      /** sim-core's static balance of it; null when the stored scenario no longer parses. */
      balance: z.record(z.string(), z.unknown()).nullable(),
    })
    .nullable(),
  sweep: z
    .object({
      scenarioName: z.string(),
      level: z.string(),
      state: z.string(),
      axes: z.array(axisSchema),
      pointCount: z.number().int(),
      pointsDone: z.number().int(),
      pointsFailed: z.number().int(),
      createdAt: z.string(),
      finishedAt: z.string().nullable(),
    })
    .nullable(),
});
export type SharedView = z.infer<typeof sharedViewSchema>;

export { surfaceQuerySchema as sharedSurfaceQuerySchema, surfaceSchema as sharedSurfaceSchema };
