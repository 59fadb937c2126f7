import {
  checkoutBodySchema,
  checkoutResponseSchema,
  listPurchasesQuerySchema,
  packListSchema,
  purchaseListSchema,
  purchaseResponseSchema,
  webhookResponseSchema,
} from '../schemas/billing.ts';
import { idParamsSchema } from '../schemas/common.ts';
import { getPurchase, listPacks, listPurchases, receivePaymentEvent, startCheckout } from '../services/billing/billing.ts';
import { defineRoute } from './route-def.ts';

const ADMINS = ['admin'] as const;

/** A provider's event is a few kilobytes; far more is not one. */
const WEBHOOK_MAX_BYTES = 256 * 1024;

export const billingRoutes = [
  defineRoute({
    id: 'listComputePacks',
    method: 'get',
    path: '/billing/packs',
    summary: 'The packs of compute units on sale, with their prices',
    tag: 'Billing',
    access: ADMINS,
    scope: 'collection',
    success: { status: 200, description: 'The packs', schema: packListSchema },
    handler: () => listPacks(),
  }),
  defineRoute({
    id: 'startCheckout',
    method: 'post',
    path: '/billing/checkout',
    summary: "Open the payment provider's checkout for one pack; the purchase is pending until the provider confirms payment",
    tag: 'Billing',
    access: ADMINS,
    scope: 'collection',
    body: checkoutBodySchema,
    success: { status: 201, description: 'Send the buyer to checkoutUrl', schema: checkoutResponseSchema },
    errors: [502],
    handler: ({ deps, auth, body, headers }) => {
      const origin = typeof headers.origin === 'string' ? headers.origin : undefined;
      return startCheckout(deps, auth, body, origin);
    },
  }),
  defineRoute({
    id: 'receivePaymentWebhook',
    method: 'post',
    path: '/billing/webhook',
    summary: "The payment provider's signed events (Stripe-Signature); a completed checkout credits its pack once",
    tag: 'Billing',
    access: 'public',
    scope: 'public',
    requestBody: { kind: 'raw', maxBytes: WEBHOOK_MAX_BYTES },
    success: { status: 200, description: 'Received; the outcome says whether it credited anything', schema: webhookResponseSchema },
    errors: [502],
    handler: ({ deps, rawBody, headers }) => receivePaymentEvent(deps, rawBody, headers),
  }),
  defineRoute({
    id: 'listPurchases',
    method: 'get',
    path: '/billing/purchases',
    summary: "The workspace's purchases of compute, newest first",
    tag: 'Billing',
    access: ADMINS,
    scope: 'collection',
    query: listPurchasesQuerySchema,
    success: { status: 200, description: 'One page of purchases', schema: purchaseListSchema },
    handler: ({ deps, auth, query }) => listPurchases(deps.knex, auth.workspaceId, query),
  }),
  defineRoute({
    id: 'getPurchase',
    method: 'get',
    path: '/billing/purchases/:id',
    summary: 'One purchase: pending until the payment is confirmed, then paid',
    tag: 'Billing',
    access: ADMINS,
    scope: 'object',
    resource: 'Purchase',
    params: idParamsSchema,
    success: { status: 200, description: 'The purchase', schema: purchaseResponseSchema },
    handler: async ({ deps, auth, params }) => ({ purchase: await getPurchase(deps.knex, auth.workspaceId, params.id) }),
  }),
];
