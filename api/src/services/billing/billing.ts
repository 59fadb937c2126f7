import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { UniqueViolationError } from 'objection';
import type Stripe from 'stripe';
import { AppError } from '../../errors/index.ts';
import { Purchase, UsageEntry } from '../../models/index.ts';
import type { ApiDeps } from '../../routes/route-def.ts';
import type { CheckoutBody, ListPurchasesQuery, PurchaseView } from '../../schemas/billing.ts';
import { recordAudit, snapshotChanges } from '../audit.ts';
import type { AuthContext } from '../auth.ts';
import { COMPUTE_PACKS, packById } from './packs.ts';
import { isStripeError, providerUnavailable, stripeClient } from './payment-provider.ts';

/** The only event that pays for anything here. */
const COMPLETED = 'checkout.session.completed';

export type WebhookOutcome = 'credited' | 'already_credited' | 'ignored';

type PurchaseRow = Purchase & { buyerName?: string | null };

function toView(row: PurchaseRow): PurchaseView {
  return {
    id: row.id,
    packId: row.packId,
    packName: row.packName,
    computeUnits: row.computeUnits,
    amountCents: row.amountCents,
    currency: row.currency,
    state: row.state,
    buyerName: row.buyerName ?? null,
    checkoutUrl: row.state === 'pending' ? row.checkoutUrl : null,
    createdAt: new Date(row.createdAt).toISOString(),
    paidAt: row.paidAt ? new Date(row.paidAt).toISOString() : null,
  };
}

function purchasesWithBuyer(knex: Knex, workspaceId: string) {
  return Purchase.query(knex)
    .select('purchases.*', knex.ref('users.display_name').as('buyer_name'))
    .leftJoin('users', 'users.id', 'purchases.buyer_id')
    .where('purchases.workspace_id', workspaceId);
}

/** The first day of the UTC month, as the usage ledger books its rows. */
export function periodMonthOf(date: Date): string {
  return `${date.getUTCFullYear()}-${String(date.getUTCMonth() + 1).padStart(2, '0')}-01`;
}

export function listPacks() {
  return { packs: COMPUTE_PACKS.map((pack) => ({ ...pack })) };
}

/**
 * Where the buyer's browser comes back to after the provider's page: the origin of the page that opened
 * the checkout when the browser named one, so the buyer returns to the address they use; PUBLIC_URL
 * otherwise. Only a signed-in admin gets here, and the credit never depends on this address.
 */
function returnBaseOf(origin: string | undefined, publicUrl: string): string {
  if (origin !== undefined) {
    try {
      const url = new URL(origin);
      if ((url.protocol === 'http:' || url.protocol === 'https:') && url.origin === origin) return url.origin;
    } catch {
      // Not an origin: fall back to the configured address.
    }
  }
  return publicUrl;
}

/**
 * Opens a Checkout Session at the provider for one pack and books the purchase as pending. The session
 * carries the purchase, the workspace and the pack in its metadata; nothing is credited until the
 * provider's signed completion event arrives at the webhook.
 */
export async function startCheckout(
  deps: ApiDeps,
  auth: AuthContext,
  body: CheckoutBody,
  origin: string | undefined,
): Promise<{ checkoutUrl: string; purchase: PurchaseView }> {
  const pack = packById(body.packId);
  if (!pack) throw AppError.validation({ packId: 'is not a pack on sale' });
  const purchaseId = randomUUID();
  const returnBase = returnBaseOf(origin, deps.config.publicUrl);

  let session: Stripe.Checkout.Session;
  try {
    session = await stripeClient(deps.config.stripe).checkout.sessions.create(
      {
        mode: 'payment',
        line_items: [
          {
            quantity: 1,
            price_data: {
              currency: pack.currency,
              unit_amount: pack.priceCents,
              product_data: { name: `Crackpoint: ${pack.name}`, description: 'Compute units for pulls and sweeps, added to this month.' },
            },
          },
        ],
        client_reference_id: purchaseId,
        metadata: { purchaseId, workspaceId: auth.workspaceId, packId: pack.id },
        success_url: `${returnBase}/billing?purchase=${purchaseId}`,
        cancel_url: `${returnBase}/billing?cancelled=${purchaseId}`,
      },
      // A repeated request (a retry on a dropped connection) opens the same session, not a second one.
      { idempotencyKey: `checkout-${purchaseId}` },
    );
  } catch (error) {
    if (!isStripeError(error)) throw error;
    deps.logger.error({ err: error, purchaseId }, 'the payment provider refused or failed to open a checkout');
    throw providerUnavailable();
  }
  if (!session.url) {
    deps.logger.error({ purchaseId, sessionId: session.id }, 'the payment provider opened a checkout without a page to send the buyer to');
    throw providerUnavailable();
  }
  const checkoutUrl = session.url;

  const purchase = await deps.knex.transaction(async (trx) => {
    const row = await Purchase.query(trx).insertAndFetch({
      id: purchaseId,
      workspaceId: auth.workspaceId,
      buyerId: auth.userId,
      packId: pack.id,
      packName: pack.name,
      computeUnits: pack.computeUnits,
      amountCents: pack.priceCents,
      currency: pack.currency,
      state: 'pending',
      checkoutSessionId: session.id,
      checkoutUrl,
    });
    await recordAudit(trx, {
      workspaceId: auth.workspaceId,
      actorId: auth.userId,
      action: 'create',
      entityType: 'purchase',
      entityId: row.id,
      changes: snapshotChanges({ packId: pack.id, computeUnits: pack.computeUnits, amountCents: pack.priceCents, currency: pack.currency, state: 'pending' }, 'to'),
    });
    return row;
  });
  return { checkoutUrl, purchase: toView({ ...purchase, buyerName: auth.user.displayName } as PurchaseRow) };
}

export async function listPurchases(knex: Knex, workspaceId: string, query: ListPurchasesQuery): Promise<{ items: PurchaseView[]; total: number }> {
  const [rows, count] = await Promise.all([
    purchasesWithBuyer(knex, workspaceId).orderBy('purchases.created_at', 'desc').orderBy('purchases.id').limit(query.limit).offset(query.offset),
    Purchase.query(knex).where({ workspace_id: workspaceId }).resultSize(),
  ]);
  return { items: (rows as PurchaseRow[]).map(toView), total: count };
}

export async function getPurchase(knex: Knex, workspaceId: string, id: string): Promise<PurchaseView> {
  const row = (await purchasesWithBuyer(knex, workspaceId).where('purchases.id', id).first()) as PurchaseRow | undefined;
  if (!row) throw AppError.notFound('Purchase');
  return toView(row);
}

function headerText(value: string | string[] | undefined): string | undefined {
  return Array.isArray(value) ? value[0] : value;
}

/**
 * One delivery of the provider's webhook. The signature is checked over the exact bytes received before
 * anything is read from them; a `checkout.session.completed` event then credits its purchase's pack to the
 * usage ledger and marks the purchase paid, in one transaction. Each payment is credited once: a purchase
 * that is paid already (the same event again, or another event about the same session) credits nothing
 * more, and the ledger's unique external reference (the session) stops a concurrent twin.
 */
export async function receivePaymentEvent(
  deps: ApiDeps,
  rawBody: Buffer | undefined,
  headers: Readonly<Record<string, string | string[] | undefined>>,
): Promise<{ received: true; outcome: WebhookOutcome }> {
  const contentType = headerText(headers['content-type']) ?? '';
  if (rawBody === undefined || !/^application\/json\b/i.test(contentType)) {
    throw new AppError(415, 'unsupported_media_type', 'Send the event as JSON (Content-Type: application/json).');
  }
  const text = rawBody.toString('utf8');
  try {
    JSON.parse(text);
  } catch {
    throw new AppError(400, 'malformed_json', 'The request body is not valid JSON.');
  }
  const signature = headerText(headers['stripe-signature']);
  if (!signature) {
    throw new AppError(400, 'invalid_signature', 'The event is not signed: the Stripe-Signature header is missing.', { 'stripe-signature': 'is required' });
  }

  const stripe = stripeClient(deps.config.stripe);
  let event: Stripe.Event;
  try {
    event = stripe.webhooks.constructEvent(rawBody, signature, deps.config.stripe.webhookSecret);
  } catch (error) {
    if (!isStripeError(error, 'StripeSignatureVerificationError')) throw error;
    throw new AppError(400, 'invalid_signature', 'The event signature does not match this endpoint; nothing was recorded.', {
      'stripe-signature': 'does not match the body and the signing secret',
    });
  }

  if (event.type !== COMPLETED) return { received: true, outcome: 'ignored' };
  const sent = event.data.object;
  const known = await Purchase.query(deps.knex).findOne({ checkout_session_id: sent.id });
  if (!known) {
    deps.logger.warn({ eventId: event.id, sessionId: sent.id }, 'a completed checkout that no purchase here opened');
    return { received: true, outcome: 'ignored' };
  }
  if (known.state === 'paid') return { received: true, outcome: 'already_credited' };

  // The session as the provider holds it now, not only as the event tells it: paid, and for this purchase.
  let session: Stripe.Checkout.Session;
  try {
    session = await stripe.checkout.sessions.retrieve(sent.id);
  } catch (error) {
    if (!isStripeError(error)) throw error;
    deps.logger.error({ err: error, eventId: event.id }, 'the payment provider could not confirm a completed checkout');
    // Not a 2xx, so the provider delivers the event again later.
    throw providerUnavailable();
  }
  const matches =
    session.metadata?.purchaseId === known.id &&
    session.metadata?.workspaceId === known.workspaceId &&
    session.amount_total === known.amountCents &&
    session.currency === known.currency;
  if (session.status !== 'complete' || session.payment_status !== 'paid' || !matches) {
    deps.logger.warn({ eventId: event.id, sessionId: session.id, status: session.status, paymentStatus: session.payment_status, matches }, 'a checkout event that pays for nothing');
    return { received: true, outcome: 'ignored' };
  }

  try {
    const outcome = await deps.knex.transaction(async (trx): Promise<WebhookOutcome> => {
      // Locked, so a second delivery of the same payment waits here and then finds it paid.
      const purchase = await Purchase.query(trx).findById(known.id).forUpdate();
      if (!purchase || purchase.state === 'paid') return 'already_credited';
      const paidAt = new Date();
      const entry = await UsageEntry.query(trx).insert({
        workspaceId: purchase.workspaceId,
        userId: purchase.buyerId,
        kind: 'purchase',
        computeUnits: purchase.computeUnits,
        periodMonth: periodMonthOf(paidAt),
        externalRef: session.id,
        note: `${purchase.packName}, bought through checkout ${session.id}`,
      });
      await purchase.$query(trx).patch({ state: 'paid', paidEventId: event.id, usageEntryId: entry.id, paidAt, checkoutUrl: null });
      await recordAudit(trx, {
        workspaceId: purchase.workspaceId,
        actorId: null,
        action: 'update',
        entityType: 'purchase',
        entityId: purchase.id,
        changes: { state: { from: 'pending', to: 'paid' }, computeUnitsCredited: { to: purchase.computeUnits }, paidEventId: { to: event.id } },
      });
      return 'credited';
    });
    return { received: true, outcome };
  } catch (error) {
    // The same session or event booked by a delivery that committed first.
    if (error instanceof UniqueViolationError) return { received: true, outcome: 'already_credited' };
    throw error;
  }
}
