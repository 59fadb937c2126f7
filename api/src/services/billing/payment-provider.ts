import Stripe from 'stripe';
import type { StripeSettings } from '../../config.ts';
import { AppError } from '../../errors/index.ts';

const clients = new WeakMap<StripeSettings, Stripe>();

/**
 * Stripe's official SDK, pointed where the configuration says: the local stand-in that `npm start` and
 * `npm test` run on loopback, or Stripe itself in a deployment. One client per configuration.
 */
export function stripeClient(settings: StripeSettings): Stripe {
  let client = clients.get(settings);
  if (!client) {
    client = new Stripe(settings.secretKey, {
      host: settings.host,
      port: settings.port,
      protocol: settings.protocol,
      // A buyer waits on the checkout call; one failure is answered at once and they press again.
      maxNetworkRetries: 0,
      timeout: 15_000,
    });
    clients.set(settings, client);
  }
  return client;
}

/** Stripe's own errors name themselves in `type` (StripeConnectionError, StripeAPIError, …). */
export function isStripeError(error: unknown, type?: string): boolean {
  const named = (error as { type?: unknown } | null)?.type;
  return typeof named === 'string' && named.startsWith('Stripe') && (type === undefined || named === type);
}

/** The provider failed or refused us: nothing was charged, and the client may try again. */
export function providerUnavailable(): AppError {
  return new AppError(
    502,
    'payment_provider_unavailable',
    'The payment provider could not be reached or refused the request. Nothing was charged; try again in a minute.',
  );
}
