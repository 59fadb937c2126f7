import { pendingPurchase, standIn } from './payment-stand-in.ts';
import type { RouteFixture } from './route-fixtures.ts';

/** Billing routes. The webhook is public: its fixture sends a completed checkout's event, correctly signed. */
export const billingFixtures: Record<string, RouteFixture> = {
  listComputePacks: { prepare: async () => ({ path: '/billing/packs' }) },
  startCheckout: { prepare: async () => ({ path: '/billing/checkout', body: { packId: 'units-10k' } }) },
  listPurchases: { prepare: async () => ({ path: '/billing/purchases', query: { limit: 200 } }) },
  getPurchase: {
    prepare: async ({ world, target }) => {
      const { id } = await pendingPurchase(world.ctx.knex, world.ctx.config, target.id, target.members.admin.id);
      return { path: `/billing/purchases/${world.track(target, id)}` };
    },
  },
  receivePaymentWebhook: {
    prepare: async ({ world, target }) => {
      const { id, sessionId } = await pendingPurchase(world.ctx.knex, world.ctx.config, target.id, target.members.admin.id);
      world.track(target, id);
      const provider = standIn(world.ctx.config);
      const { event } = await provider.complete(sessionId, { deliver: false });
      return { path: '/billing/webhook', body: event, headers: { 'Stripe-Signature': provider.sign(JSON.stringify(event)) } };
    },
  },
};
