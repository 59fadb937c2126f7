import { createServer, type IncomingMessage, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { loadConfig } from '@crackpoint/api'
import Stripe from 'stripe'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { parseConfig } from '../../scripts/lib/config.ts'
import { LOCAL_PAYMENT_KEYS, paymentFakeEnv, startPaymentFake, totalOfLineItems, type PaymentFake } from '../../scripts/lib/payment-fake.ts'

interface Received {
  body: string
  signature: string
}

/** A webhook endpoint that records what it is sent and answers with the statuses it is given, in turn. */
async function startReceiver(statuses: number[] = []) {
  const received: Received[] = []
  const server: Server = createServer((req: IncomingMessage, res) => {
    const chunks: Buffer[] = []
    req.on('data', (chunk: Buffer) => chunks.push(chunk))
    req.on('end', () => {
      received.push({ body: Buffer.concat(chunks).toString('utf8'), signature: String(req.headers['stripe-signature'] ?? '') })
      res.statusCode = statuses.shift() ?? 200
      res.end('{}')
    })
  })
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()))
  return {
    url: `http://127.0.0.1:${(server.address() as AddressInfo).port}/hook`,
    received,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}

const item = (unitAmount: number, name = '10,000 compute units') => ({
  quantity: 1,
  price_data: { currency: 'usd', unit_amount: unitAmount, product_data: { name } },
})

let fake: PaymentFake
let stripe: Stripe

beforeAll(async () => {
  fake = await startPaymentFake({ port: 0, ...LOCAL_PAYMENT_KEYS, retryDelayMs: 20 })
  stripe = new Stripe(LOCAL_PAYMENT_KEYS.secretKey, { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 })
})

afterAll(async () => {
  await fake?.close()
})

async function openSession(extra: Partial<Stripe.Checkout.SessionCreateParams> = {}) {
  return stripe.checkout.sessions.create({
    mode: 'payment',
    line_items: [item(1900)],
    metadata: { purchaseId: 'p-1', workspaceId: 'w-1', packId: 'units-10k' },
    success_url: 'http://127.0.0.1:8080/billing?session={CHECKOUT_SESSION_ID}',
    cancel_url: 'http://127.0.0.1:8080/billing?cancelled=1',
    ...extra,
  })
}

describe('the payment stand-in, through the official SDK', () => {
  it('opens a session with its total, metadata and a checkout page of its own, and hands it back on retrieve', async () => {
    const session = await openSession({ line_items: [item(1900), { ...item(250, 'Extra'), quantity: 2 }] })
    expect(session).toMatchObject({ status: 'open', payment_status: 'unpaid', amount_total: 2400, currency: 'usd', livemode: false })
    expect(session.metadata).toEqual({ purchaseId: 'p-1', workspaceId: 'w-1', packId: 'units-10k' })
    expect(session.url).toBe(`${fake.baseUrl}/pay/${session.id}`)
    expect((await stripe.checkout.sessions.retrieve(session.id)).id).toBe(session.id)
  })

  it('refuses a wrong secret key as Stripe does', async () => {
    const stranger = new Stripe('sk_test_someone_else', { host: '127.0.0.1', port: fake.port, protocol: 'http', maxNetworkRetries: 0 })
    await expect(stranger.checkout.sessions.retrieve('cs_test_any')).rejects.toMatchObject({ type: 'StripeAuthenticationError', statusCode: 401 })
  })

  it('names the parameter it refuses, and a session it does not have', async () => {
    await expect(openSession({ line_items: [] })).rejects.toMatchObject({ type: 'StripeInvalidRequestError', param: 'line_items' })
    await expect(openSession({ success_url: 'not a url' })).rejects.toMatchObject({ param: 'success_url' })
    await expect(stripe.checkout.sessions.retrieve('cs_test_missing')).rejects.toMatchObject({ statusCode: 404, code: 'resource_missing' })
  })

  it('opens one session for one idempotency key', async () => {
    const a = await stripe.checkout.sessions.create(
      { mode: 'payment', line_items: [item(1900)], success_url: 'http://127.0.0.1:8080/x' },
      { idempotencyKey: 'same-purchase' },
    )
    const b = await stripe.checkout.sessions.create(
      { mode: 'payment', line_items: [item(1900)], success_url: 'http://127.0.0.1:8080/x' },
      { idempotencyKey: 'same-purchase' },
    )
    expect(b.id).toBe(a.id)
  })
})

describe('line item totals', () => {
  it('adds unit amount times quantity, and refuses mixed currencies and missing names', () => {
    // Form-encoded parameters arrive as text, as the SDK sends them.
    const line = (unitAmount: string, quantity: string) => ({ quantity, price_data: { currency: 'usd', unit_amount: unitAmount, product_data: { name: 'a' } } })
    expect(totalOfLineItems([line('1000', '1'), line('5', '3')])).toEqual({ amount: 1015, currency: 'usd' })
    expect(() => totalOfLineItems([{ price_data: { currency: 'usd', unit_amount: '1', product_data: { name: 'a' } } }, { price_data: { currency: 'eur', unit_amount: '1', product_data: { name: 'b' } } }])).toThrow(
      /same currency/,
    )
    expect(() => totalOfLineItems([{ price_data: { currency: 'usd', unit_amount: '1', product_data: {} } }])).toThrow(/product_data\]\[name\]/)
    expect(() => totalOfLineItems([{ price_data: { currency: 'usd', unit_amount: '-1', product_data: { name: 'a' } } }])).toThrow(/Invalid integer/)
  })
})

describe('paying on the checkout page', () => {
  it('shows the total and a pay button, then sends the buyer back and delivers a signed event the SDK verifies', async () => {
    const receiver = await startReceiver()
    const registered = await fetch(`${fake.baseUrl}/_fake/webhook-endpoints`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ url: receiver.url }),
    }).then((r) => r.json() as Promise<{ id: string }>)
    try {
      const session = await openSession()
      const page = await fetch(`${fake.baseUrl}/pay/${session.id}`).then((r) => r.text())
      expect(page).toContain('local stand-in')
      expect(page).toContain('Pay $19.00')

      const paid = await fetch(`${fake.baseUrl}/pay/${session.id}`, { method: 'POST', redirect: 'manual' })
      expect(paid.status).toBe(303)
      expect(paid.headers.get('location')).toBe(`http://127.0.0.1:8080/billing?session=${session.id}`)

      await expect.poll(() => receiver.received.length).toBe(1)
      const [delivery] = receiver.received
      const event = stripe.webhooks.constructEvent(delivery!.body, delivery!.signature, LOCAL_PAYMENT_KEYS.webhookSecret)
      expect(event.type).toBe('checkout.session.completed')
      const completed = event.data.object as Stripe.Checkout.Session
      expect(completed).toMatchObject({ id: session.id, status: 'complete', payment_status: 'paid', metadata: { packId: 'units-10k' } })
      expect((await stripe.checkout.sessions.retrieve(session.id)).payment_status).toBe('paid')
      expect(await fetch(`${fake.baseUrl}/pay/${session.id}`).then((r) => r.text())).toContain('already paid')
    } finally {
      await fetch(`${fake.baseUrl}/_fake/webhook-endpoints/${registered.id}`, { method: 'DELETE' })
      await receiver.close()
    }
  })

  it('tries a failing endpoint again with the same event, and stops once it answers 2xx', async () => {
    const receiver = await startReceiver([500, 503])
    const own = await startPaymentFake({ port: 0, ...LOCAL_PAYMENT_KEYS, webhookUrls: [receiver.url], retryDelayMs: 10, deliveryAttempts: 4 })
    try {
      const client = new Stripe(LOCAL_PAYMENT_KEYS.secretKey, { host: '127.0.0.1', port: own.port, protocol: 'http', maxNetworkRetries: 0 })
      const session = await client.checkout.sessions.create({ mode: 'payment', line_items: [item(100)], success_url: 'http://127.0.0.1:8080/x' })
      await fetch(`${own.baseUrl}/pay/${session.id}`, { method: 'POST', redirect: 'manual' })
      await expect.poll(() => receiver.received.length).toBe(3)
      await new Promise((resolve) => setTimeout(resolve, 100))
      expect(receiver.received).toHaveLength(3)
      const ids = receiver.received.map((r) => (JSON.parse(r.body) as { id: string }).id)
      expect(new Set(ids).size).toBe(1)
    } finally {
      await own.close()
      await receiver.close()
    }
  })

  it('completes a session once: the test control refuses a second completion', async () => {
    const session = await openSession()
    const first = await fetch(`${fake.baseUrl}/_fake/checkout/sessions/${session.id}/complete`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ deliver: false }),
    })
    expect(first.status).toBe(200)
    const again = await fetch(`${fake.baseUrl}/_fake/checkout/sessions/${session.id}/complete`, { method: 'POST' })
    expect(again.status).toBe(400)
    expect(((await again.json()) as { error: { code: string } }).error.code).toBe('checkout_session_complete')
  })
})

describe('settings', () => {
  it("runs with the API's own local defaults, so npm start and npm test need no keys", () => {
    const defaults = loadConfig({}).stripe
    expect(defaults.secretKey).toBe(LOCAL_PAYMENT_KEYS.secretKey)
    expect(defaults.webhookSecret).toBe(LOCAL_PAYMENT_KEYS.webhookSecret)
    const pointed = loadConfig(paymentFakeEnv({ baseUrl: 'http://127.0.0.1:55551' })).stripe
    expect(pointed).toMatchObject({ protocol: 'http', host: '127.0.0.1', port: 55551 })
    expect(loadConfig({}).stripe.port).toBe(parseConfig({}, { mode: 'dev' }).payments.port)
  })

  it('takes the stand-in to other ports by CRACKPOINT_PAYMENTS_PORT and CRACKPOINT_TEST_PAYMENTS_PORT', () => {
    expect(parseConfig({ CRACKPOINT_PAYMENTS_PORT: '55551' }, { mode: 'dev' }).payments.port).toBe(55551)
    expect(parseConfig({ CRACKPOINT_TEST_PAYMENTS_PORT: '55561' }, { mode: 'test', dataDir: '/tmp/x' }).payments.port).toBe(55561)
    expect(parseConfig({ CRACKPOINT_PAYMENTS_PORT: '55551' }, { mode: 'test', dataDir: '/tmp/x' }).payments.port).toBe(55055)
  })

  it('points the SDK at Stripe itself when STRIPE_API_BASE says so, and refuses the local keys in production', () => {
    expect(loadConfig({ STRIPE_API_BASE: 'https://api.stripe.com' }).stripe).toMatchObject({ protocol: 'https', host: 'api.stripe.com', port: 443 })
    expect(() => loadConfig({ NODE_ENV: 'production', JWT_SECRET: 'x'.repeat(40) })).toThrow(/STRIPE_SECRET_KEY[\s\S]*STRIPE_WEBHOOK_SECRET/)
  })
})
