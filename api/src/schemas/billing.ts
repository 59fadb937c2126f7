import { z } from 'zod';
import { PACK_IDS } from '../services/billing/packs.ts';

export const packSchema = z.object({
  id: z.enum(PACK_IDS),
  name: z.string(),
  computeUnits: z.number().int().positive(),
  /** In the currency's smallest unit (cents). */
  priceCents: z.number().int().nonnegative(),
  currency: z.string().regex(/^[a-z]{3}$/),
});

export const packListSchema = z.object({ packs: z.array(packSchema) });

export const checkoutBodySchema = z.strictObject({
  packId: z.enum(PACK_IDS, { error: `must be one of ${PACK_IDS.join(', ')}` }),
});
export type CheckoutBody = z.output<typeof checkoutBodySchema>;

export const purchaseViewSchema = z.object({
  id: z.uuid(),
  packId: z.string(),
  packName: z.string(),
  computeUnits: z.number().int().positive(),
  amountCents: z.number().int().nonnegative(),
  currency: z.string(),
  state: z.enum(['pending', 'paid']),
  buyerName: z.string().nullable(),
  /** The provider's checkout page while the purchase is pending; null once paid. */
  checkoutUrl: z.string().nullable(),
  createdAt: z.iso.datetime(),
  paidAt: z.iso.datetime().nullable(),
});
export type PurchaseView = z.output<typeof purchaseViewSchema>;

export const purchaseResponseSchema = z.object({ purchase: purchaseViewSchema });

export const checkoutResponseSchema = z.object({
  /** Where the buyer's browser goes next: the provider's hosted checkout page. */
  checkoutUrl: z.url(),
  purchase: purchaseViewSchema,
});

export const listPurchasesQuerySchema = z.object({
  limit: z.coerce.number().int().min(1).max(200).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});
export type ListPurchasesQuery = z.output<typeof listPurchasesQuerySchema>;

export const purchaseListSchema = z.object({ items: z.array(purchaseViewSchema), total: z.number().int() });

export const webhookResponseSchema = z.object({
  received: z.literal(true),
  /**
   * `credited`: this event paid for a purchase now; `already_credited`: its session or the event itself was
   * credited before (a replay); `ignored`: an event type or a session that buys nothing here.
   */
  outcome: z.enum(['credited', 'already_credited', 'ignored']),
});
