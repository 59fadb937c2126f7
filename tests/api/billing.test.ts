import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, createWorkspace, deleteWorkspace, tokensFor, type Role, type TestContext, type TestWorkspace } from './helpers/context.ts';
import { dbFingerprint } from './helpers/db-fingerprint.ts';
import { pendingPurchase, standIn, type StandIn } from './helpers/payment-stand-in.ts';

/**
 * Buying compute through the payment provider's SDK against the local stand-in npm test runs: the checkout,
 * the buyer paying on the stand-in, its signed webhook reaching this API over HTTP, and the pack credited to
 * the usage ledger exactly once however often the event arrives.
 */

let ctx: TestContext;
let server: Server;
let provider: StandIn;
let unregister: () => Promise<void>;
let shop: TestWorkspace;
let tokens: Record<Role, string>;
const ORIGIN = 'http://127.0.0.1:8080';

beforeAll(async () => {
  ctx = createTestContext();
  provider = standIn(ctx.config);
  // The stand-in delivers events over HTTP, so this API listens for real.
  server = await new Promise<Server>((resolve, reject) => {
    const listening = ctx.app.listen(0, '127.0.0.1', () => resolve(listening));
    listening.on('error', reject);
  });
  unregister = await provider.registerEndpoint(`http://127.0.0.1:${(server.address() as AddressInfo).port}/api/billing/webhook`);
  shop = await createWorkspace(ctx.knex, 'billing');
  tokens = await tokensFor(ctx.app, shop);
});

afterAll(async () => {
  await unregister?.();
  await new Promise<void>((resolve) => server?.close(() => resolve()));
  if (shop) await deleteWorkspace(ctx.knex, shop);
  await ctx?.close();
});

const asAdmin = (req: request.Test) => req.set('Authorization', `Bearer ${tokens.admin}`);

async function checkout(packId: string) {
  const response = await asAdmin(request(ctx.app).post('/api/billing/checkout')).set('Origin', ORIGIN).send({ packId });
  expect(response.status, JSON.stringify(response.body)).toBe(201);
  return response.body as { checkoutUrl: string; purchase: { id: string; state: string; computeUnits: number; amountCents: number } };
}

async function sessionIdOf(purchaseId: string): Promise<string> {
  return (await ctx.knex('purchases').where({ id: purchaseId }).first<{ checkout_session_id: string }>()).checkout_session_id;
}

async function ledgerOf(workspaceId: string) {
  return ctx.knex('usage_ledger').where({ workspace_id: workspaceId, kind: 'purchase' }).orderBy('created_at');
}

function sendEvent(event: unknown, signature: string | null, body = JSON.stringify(event)) {
  const req = request(ctx.app).post('/api/billing/webhook').set('Content-Type', 'application/json');
  return (signature === null ? req : req.set('Stripe-Signature', signature)).send(body);
}

function utcMonthStart(date: Date): string {
  return `${date.getUTCFullYear()}-${String(date.getUTCMonth() + 1).padStart(2, '0')}-01`;
}

describe('packs', () => {
  it('lists the packs on sale with their units and prices in cents', async () => {
    const response = await asAdmin(request(ctx.app).get('/api/billing/packs'));
    expect(response.status).toBe(200);
    expect(response.body.packs.map((p: { id: string; computeUnits: number }) => [p.id, p.computeUnits])).toEqual([
      ['units-10k', 10_000],
      ['units-50k', 50_000],
      ['units-200k', 200_000],
    ]);
    for (const pack of response.body.packs as { priceCents: number; currency: string }[]) {
      expect(Number.isInteger(pack.priceCents) && pack.priceCents > 0).toBe(true);
      expect(pack.currency).toBe('usd');
    }
  });
});

describe('a whole purchase through the stand-in', () => {
  let purchaseId: string;
  let sessionId: string;
  let eventId: string;
  let paidEvent: Record<string, unknown>;

  it('opens a checkout at the provider with the workspace and the pack in its metadata, and books it pending', async () => {
    const opened = await checkout('units-50k');
    purchaseId = opened.purchase.id;
    expect(opened.purchase).toMatchObject({ state: 'pending', computeUnits: 50_000, amountCents: 7_900 });
    expect(opened.checkoutUrl.startsWith(`${provider.baseUrl}/pay/cs_test_`)).toBe(true);

    sessionId = await sessionIdOf(purchaseId);
    const session = await provider.stripe.checkout.sessions.retrieve(sessionId);
    expect(session.metadata).toEqual({ purchaseId, workspaceId: shop.id, packId: 'units-50k' });
    expect(session.amount_total).toBe(7_900);
    expect(session.client_reference_id).toBe(purchaseId);
    expect(session.success_url).toBe(`${ORIGIN}/billing?purchase=${purchaseId}`);
    expect(session.cancel_url).toBe(`${ORIGIN}/billing?cancelled=${purchaseId}`);

    expect(await ledgerOf(shop.id)).toEqual([]);
    const audit = await ctx.knex('audit_log').where({ entity_type: 'purchase', entity_id: purchaseId });
    expect(audit.map((row: { action: string; actor_id: string }) => [row.action, row.actor_id])).toEqual([['create', shop.members.admin.id]]);
  });

  it('credits the pack once when the buyer pays and the signed event arrives', async () => {
    const { event, deliveries } = await provider.complete(sessionId);
    eventId = event.id;
    paidEvent = event;
    expect(deliveries.map((d) => d.status)).toEqual([200]);

    const ledger = await ledgerOf(shop.id);
    expect(ledger).toHaveLength(1);
    expect(ledger[0]).toMatchObject({ kind: 'purchase', compute_units: '50000', external_ref: sessionId, user_id: shop.members.admin.id });
    expect(new Date(ledger[0].period_month).getDate()).toBe(1);

    const purchase = await ctx.knex('purchases').where({ id: purchaseId }).first();
    expect(purchase).toMatchObject({ state: 'paid', paid_event_id: eventId, usage_entry_id: ledger[0].id, checkout_url: null });
    const audit = await ctx.knex('audit_log').where({ entity_type: 'purchase', entity_id: purchaseId, action: 'update' });
    expect(audit).toHaveLength(1);
    expect(audit[0].changes.state).toEqual({ from: 'pending', to: 'paid' });

    const shown = await asAdmin(request(ctx.app).get(`/api/billing/purchases/${purchaseId}`));
    expect(shown.body.purchase).toMatchObject({ state: 'paid', checkoutUrl: null, buyerName: 'Test admin' });
    expect(shown.body.purchase.paidAt).not.toBeNull();
    const listed = await asAdmin(request(ctx.app).get('/api/billing/purchases'));
    expect(listed.body.items.map((p: { id: string }) => p.id)).toContain(purchaseId);
  });

  it('books the credit in the current UTC month, where the quotas count it', async () => {
    const [row] = await ctx.knex.raw<{ rows: { month: string }[] }>(
      "select to_char(period_month, 'YYYY-MM-DD') as month from usage_ledger where external_ref = ?",
      [sessionId],
    ).then((result) => result.rows);
    expect(row?.month).toBe(utcMonthStart(new Date()));
  });

  it('credits nothing more when the provider delivers the same event again, and answers 200', async () => {
    const before = await dbFingerprint(ctx.knex);
    const { deliveries } = await provider.resend(eventId);
    expect(deliveries.map((d) => d.status)).toEqual([200]);
    const replay = await sendEvent(paidEvent, provider.sign(JSON.stringify(paidEvent)));
    expect(replay.status).toBe(200);
    expect(replay.body).toEqual({ received: true, outcome: 'already_credited' });
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('credits nothing more for a second event about the same session', async () => {
    const twin = { ...paidEvent, id: `${eventId}_twin` };
    const before = await dbFingerprint(ctx.knex);
    const response = await sendEvent(twin, provider.sign(JSON.stringify(twin)));
    expect(response.status).toBe(200);
    expect(response.body.outcome).toBe('already_credited');
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
    expect(await ledgerOf(shop.id)).toHaveLength(1);
  });

  it('refuses to complete the session a second time at the provider', async () => {
    await expect(provider.complete(sessionId)).rejects.toThrow(/400/);
  });
});

describe('events delivered at once', () => {
  it('credits once when two deliveries of the same event race each other', async () => {
    const { id, sessionId } = await pendingPurchase(ctx.knex, ctx.config, shop.id, shop.members.admin.id);
    const { event } = await provider.complete(sessionId, { deliver: false });
    const body = JSON.stringify(event);
    const answers = await Promise.all([sendEvent(event, provider.sign(body)), sendEvent(event, provider.sign(body)), sendEvent(event, provider.sign(body))]);
    expect(answers.map((a) => a.status)).toEqual([200, 200, 200]);
    expect(answers.map((a) => a.body.outcome).sort()).toEqual(['already_credited', 'already_credited', 'credited']);
    expect(await ctx.knex('usage_ledger').where({ external_ref: sessionId })).toHaveLength(1);
    expect((await ctx.knex('purchases').where({ id }).first()).state).toBe('paid');
  });
});

describe('signatures', () => {
  let event: Record<string, unknown>;
  let purchaseId: string;

  beforeAll(async () => {
    const pending = await pendingPurchase(ctx.knex, ctx.config, shop.id, shop.members.admin.id);
    purchaseId = pending.id;
    event = (await provider.complete(pending.sessionId, { deliver: false })).event;
  });

  const refusals: [string, () => { signature: string | null; body?: string }][] = [
    ['signed with another secret', () => ({ signature: provider.sign(JSON.stringify(event), 'whsec_someone_else') })],
    ['not signed at all', () => ({ signature: null })],
    ['signed, then changed', () => ({ signature: provider.sign(JSON.stringify(event)), body: JSON.stringify({ ...event, id: 'evt_test_forged' }) })],
    ['signed with a made-up header', () => ({ signature: 't=1,v1=00' })],
  ];

  for (const [name, make] of refusals) {
    it(`answers an event ${name} with 400 and stores nothing`, async () => {
      const { signature, body } = make();
      const before = await dbFingerprint(ctx.knex);
      const response = await sendEvent(event, signature, body);
      expect(response.status).toBe(400);
      expect(response.body.error.code).toBe('invalid_signature');
      expect(response.body.error.fields).toHaveProperty('stripe-signature');
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    });
  }

  it('answers an event signed too long ago (a captured delivery played back) with 400', async () => {
    const payload = JSON.stringify(event);
    const stale = provider.stripe.webhooks.generateTestHeaderString({
      payload,
      secret: ctx.config.stripe.webhookSecret,
      timestamp: Math.floor(Date.now() / 1000) - 3600,
    });
    const before = await dbFingerprint(ctx.knex);
    const response = await sendEvent(event, stale);
    expect(response.status).toBe(400);
    expect(response.body.error.code).toBe('invalid_signature');
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('credits the same event once it arrives correctly signed', async () => {
    const response = await sendEvent(event, provider.sign(JSON.stringify(event)));
    expect(response.body).toEqual({ received: true, outcome: 'credited' });
    expect((await ctx.knex('purchases').where({ id: purchaseId }).first()).state).toBe('paid');
  });
});

describe('events that pay for nothing', () => {
  it('ignores another kind of event and a checkout no purchase here opened, storing nothing', async () => {
    const session = await provider.stripe.checkout.sessions.create({
      mode: 'payment',
      line_items: [{ quantity: 1, price_data: { currency: 'usd', unit_amount: 500, product_data: { name: 'Something else' } } }],
      success_url: 'http://127.0.0.1:8080/elsewhere',
    });
    const { event } = await provider.complete(session.id, { deliver: false });
    const other = { ...event, id: 'evt_test_other_kind', type: 'customer.created' };
    const before = await dbFingerprint(ctx.knex);
    for (const sent of [event, other]) {
      const response = await sendEvent(sent, provider.sign(JSON.stringify(sent)));
      expect(response.status).toBe(200);
      expect(response.body.outcome).toBe('ignored');
    }
    expect(await dbFingerprint(ctx.knex)).toEqual(before);
  });

  it('does not credit a session the provider does not hold as paid', async () => {
    const { id, sessionId } = await pendingPurchase(ctx.knex, ctx.config, shop.id, shop.members.admin.id);
    const open = await provider.stripe.checkout.sessions.retrieve(sessionId);
    // Correctly signed, but the provider's own record of the session says it is still open and unpaid.
    const event = { id: 'evt_test_premature', object: 'event', type: 'checkout.session.completed', created: Math.floor(Date.now() / 1000), data: { object: open } };
    const response = await sendEvent(event, provider.sign(JSON.stringify(event)));
    expect(response.body.outcome).toBe('ignored');
    expect((await ctx.knex('purchases').where({ id }).first()).state).toBe('pending');
    expect(await ctx.knex('usage_ledger').where({ external_ref: sessionId })).toHaveLength(0);
  });
});

describe('who may buy', () => {
  for (const role of ['engineer', 'builder', 'analyst'] as const) {
    it(`refuses the ${role} every billing route but the webhook, writing nothing`, async () => {
      const before = await dbFingerprint(ctx.knex);
      const auth = (req: request.Test) => req.set('Authorization', `Bearer ${tokens[role]}`);
      const answers = [
        await auth(request(ctx.app).get('/api/billing/packs')),
        await auth(request(ctx.app).post('/api/billing/checkout')).send({ packId: 'units-10k' }),
        await auth(request(ctx.app).get('/api/billing/purchases')),
      ];
      expect(answers.map((a) => a.status)).toEqual([403, 403, 403]);
      expect(answers.every((a) => a.body.error.code === 'forbidden')).toBe(true);
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    });
  }

  it('names the field when the pack is not one on sale', async () => {
    const response = await asAdmin(request(ctx.app).post('/api/billing/checkout')).send({ packId: 'units-free' });
    expect(response.status).toBe(400);
    expect(response.body.error.fields.packId).toMatch(/units-10k/);
  });
});

describe('when the provider cannot be reached', () => {
  it('answers 502 and books nothing', async () => {
    // Port 9 (discard) on loopback: nothing listens there, so the SDK's request is refused at once.
    const offline = createTestContext({ STRIPE_API_BASE: 'http://127.0.0.1:9' });
    try {
      const before = await dbFingerprint(ctx.knex);
      const response = await request(offline.app).post('/api/billing/checkout').set('Authorization', `Bearer ${tokens.admin}`).send({ packId: 'units-10k' });
      expect(response.status).toBe(502);
      expect(response.body.error.code).toBe('payment_provider_unavailable');
      expect(await dbFingerprint(ctx.knex)).toEqual(before);
    } finally {
      await offline.close();
    }
  });
});
