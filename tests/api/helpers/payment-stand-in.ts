import { randomUUID } from 'node:crypto';
import type { Config } from '@crackpoint/api';
import type { Knex } from 'knex';
import Stripe from 'stripe';

/**
 * Talks to the local payment stand-in that npm test runs (STRIPE_API_BASE): the SDK for what the API
 * itself calls, the stand-in's own test controls for playing the buyer, and Stripe's header generator for
 * events a test sends itself.
 */
export interface StandIn {
  stripe: Stripe;
  baseUrl: string;
  /** Completes a session as if the buyer paid; `deliver: false` only returns the event it made. */
  complete(sessionId: string, options?: { deliver?: boolean }): Promise<{ event: Record<string, unknown> & { id: string }; deliveries: { url: string; status: number }[] }>;
  resend(eventId: string): Promise<{ deliveries: { url: string; status: number }[] }>;
  /** Every later event is also POSTed here, until the returned function is called. */
  registerEndpoint(url: string): Promise<() => Promise<void>>;
  /** A Stripe-Signature header for exactly these bytes, as the provider signs them. */
  sign(payload: string, secret?: string): string;
}

export function standIn(config: Config): StandIn {
  const settings = config.stripe;
  const stripe = new Stripe(settings.secretKey, { host: settings.host, port: settings.port, protocol: settings.protocol, maxNetworkRetries: 0 });
  const baseUrl = `${settings.protocol}://${settings.host}:${settings.port}`;
  const post = async (path: string, body?: unknown) => {
    const response = await fetch(`${baseUrl}${path}`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify(body ?? {}),
    });
    if (!response.ok) throw new Error(`${path} answered ${response.status}: ${await response.text()}`);
    return response.json() as Promise<never>;
  };
  return {
    stripe,
    baseUrl,
    complete: (sessionId, options = {}) => post(`/_fake/checkout/sessions/${sessionId}/complete`, options),
    resend: (eventId) => post(`/_fake/events/${eventId}/resend`),
    async registerEndpoint(url) {
      const { id } = (await post('/_fake/webhook-endpoints', { url })) as { id: string };
      return async () => {
        await fetch(`${baseUrl}/_fake/webhook-endpoints/${id}`, { method: 'DELETE' });
      };
    },
    sign: (payload, secret = settings.webhookSecret) => stripe.webhooks.generateTestHeaderString({ payload, secret }),
  };
}

/**
 * A pending purchase written straight to the database with a real session at the stand-in behind it,
 * as the checkout route would leave it.
 */
export async function pendingPurchase(knex: Knex, config: Config, workspaceId: string, buyerId: string): Promise<{ id: string; sessionId: string }> {
  const id = randomUUID();
  const session = await standIn(config).stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [{ quantity: 1, price_data: { currency: 'usd', unit_amount: 1900, product_data: { name: '10,000 compute units' } } }],
    client_reference_id: id,
    metadata: { purchaseId: id, workspaceId, packId: 'units-10k' },
    success_url: `http://127.0.0.1:8080/billing?purchase=${id}`,
  });
  await knex('purchases').insert({
    id,
    workspace_id: workspaceId,
    buyer_id: buyerId,
    pack_id: 'units-10k',
    pack_name: '10,000 compute units',
    compute_units: 10_000,
    amount_cents: 1900,
    currency: 'usd',
    state: 'pending',
    checkout_session_id: session.id,
    checkout_url: session.url,
  });
  return { id, sessionId: session.id };
}
