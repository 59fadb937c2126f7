import { z } from 'zod';
import { uuidSchema } from './common.ts';

/** A monthly allowance in compute units: a whole number, 0 stopping all compute. */
const monthlyUnitsSchema = z
  .number({ error: 'must be a whole number of compute units' })
  .int('must be a whole number of compute units')
  .min(0, 'must be 0 or more')
  .max(1_000_000_000, 'must be at most 1,000,000,000');

export const sweepEstimateSchema = z.object({
  pointCount: z.number().int(),
  computeUnits: z.number().int(),
  /** Left this month: of the caller's own limit (null when they have none) and of the workspace's. */
  remaining: z.object({ member: z.number().int().nullable(), workspace: z.number().int() }),
});
export type SweepEstimate = z.infer<typeof sweepEstimateSchema>;
export const sweepEstimateResponseSchema = z.object({ estimate: sweepEstimateSchema });

export const workspaceQuotaBodySchema = z.strictObject({ monthlyComputeUnits: monthlyUnitsSchema });
export type WorkspaceQuotaBody = z.output<typeof workspaceQuotaBodySchema>;

export const memberQuotaBodySchema = z.strictObject({
  /** null removes the member's own limit; the workspace's still applies. */
  monthlyComputeUnits: monthlyUnitsSchema.nullable(),
});
export type MemberQuotaBody = z.output<typeof memberQuotaBodySchema>;

export const memberQuotaParamsSchema = z.strictObject({ userId: uuidSchema });

const roleSchema = z.enum(['admin', 'engineer', 'builder', 'analyst']);

export const quotasSchema = z.object({
  workspace: z.object({
    monthlyComputeUnits: z.number().int(),
    /** True while the workspace has no quota of its own and the server's default applies. */
    isDefault: z.boolean(),
    updatedAt: z.string().nullable(),
  }),
  members: z.array(
    z.object({
      userId: z.uuid(),
      displayName: z.string(),
      email: z.string(),
      role: roleSchema,
      /** The member's own monthly limit; null when only the workspace's limits them. */
      monthlyComputeUnits: z.number().int().nullable(),
    }),
  ),
});
export type QuotasView = z.infer<typeof quotasSchema>;
export const quotasResponseSchema = z.object({ quotas: quotasSchema });

export const usageQuerySchema = z.object({
  month: z
    .string()
    .regex(/^\d{4}-(0[1-9]|1[0-2])$/, 'must be a month as YYYY-MM')
    .optional(),
});
export type UsageQuery = z.output<typeof usageQuerySchema>;

const unitsSchema = z.object({ spent: z.number().int(), reserved: z.number().int() });

export const usageSchema = z.object({
  /** The month shown, YYYY-MM (UTC). */
  month: z.string(),
  /** Every month from the first ledger entry to this one, newest first. */
  months: z.array(z.string()),
  own: unitsSchema.extend({
    userId: z.uuid(),
    /** The caller's own monthly limit; null when only the workspace's limits them. */
    quota: z.number().int().nullable(),
    /** What the caller could still use that month: the smaller of their own and the workspace's remaining. */
    remaining: z.number().int(),
  }),
  /** Admins only (null for other roles): the workspace's totals. */
  workspace: unitsSchema
    .extend({
      quota: z.number().int(),
      quotaIsDefault: z.boolean(),
      purchased: z.number().int(),
      granted: z.number().int(),
      remaining: z.number().int(),
    })
    .nullable(),
  /** Admins only (null for other roles): every member's usage that month. */
  members: z
    .array(
      unitsSchema.extend({
        userId: z.uuid(),
        displayName: z.string(),
        email: z.string(),
        role: roleSchema,
        quota: z.number().int().nullable(),
        granted: z.number().int(),
        remaining: z.number().int().nullable(),
      }),
    )
    .nullable(),
});
export type UsageView = z.infer<typeof usageSchema>;
export const usageResponseSchema = z.object({ usage: usageSchema });
