import { randomBytes } from 'node:crypto'
import { createServer } from 'node:http'
import type { AddressInfo } from 'node:net'
import express, { type NextFunction, type Request, type Response } from 'express'
import Stripe from 'stripe'

/**
 * LOCAL STAND-IN for the payment provider (Stripe). It answers the few calls of Stripe's REST API that
 * Crackpoint makes (create a Checkout Session, retrieve it), shows a checkout page of its own where the
 * buyer presses pay, and then POSTs a signed `checkout.session.completed` event to the registered
 * webhook URLs, signed exactly as Stripe signs (the SDK's own header generator), so the API verifies it
 * with `stripe.webhooks.constructEvent` unchanged. No card is asked for and no money moves.
 *
 * A real deployment never runs this: it points STRIPE_API_BASE at https://api.stripe.com (or leaves it
 * unset there) and sets STRIPE_SECRET_KEY and STRIPE_WEBHOOK_SECRET from the Stripe dashboard.
 */

/**
 * The keys the stand-in is run with, which are also the API's local defaults (api/src/config.ts); npm start
 * and npm test hand them to both sides, so the two always agree.
 */
export const LOCAL_PAYMENT_KEYS = {
  secretKey: 'sk_test_crackpoint_local_stand_in',
  webhookSecret: 'whsec_crackpoint_local_stand_in',
} as const

/** What the API is started with to use a running stand-in. */
export function paymentFakeEnv(fake: Pick<PaymentFake, 'baseUrl'>): Record<string, string> {
  return {
    STRIPE_API_BASE: fake.baseUrl,
    STRIPE_SECRET_KEY: LOCAL_PAYMENT_KEYS.secretKey,
    STRIPE_WEBHOOK_SECRET: LOCAL_PAYMENT_KEYS.webhookSecret,
  }
}

export interface PaymentFakeOptions {
  host?: string
  /** 0 takes any free port. */
  port: number
  /** The secret key the API sends as its bearer token; any other key is refused as Stripe refuses it. */
  secretKey: string
  /** Signs every webhook delivery (Stripe's `whsec_…` signing secret of an endpoint). */
  webhookSecret: string
  /** Endpoints that receive every event from the start (npm start passes the API's webhook URL). */
  webhookUrls?: readonly string[]
  /** Delivery attempts after a press of the pay button (a failed delivery is retried, as Stripe does). */
  deliveryAttempts?: number
  /** Wait before the second attempt; doubled for each one after. */
  retryDelayMs?: number
}

export interface WebhookDelivery {
  url: string
  /** The endpoint's HTTP status; 0 when it could not be reached. */
  status: number
}

export interface PaymentFake {
  readonly host: string
  readonly port: number
  /** What the API's STRIPE_API_BASE is set to. */
  readonly baseUrl: string
  close(): Promise<void>
}

/** The subset of a Checkout Session that Crackpoint reads, in Stripe's field names. */
export interface FakeCheckoutSession {
  id: string
  object: 'checkout.session'
  mode: 'payment'
  status: 'open' | 'complete'
  payment_status: 'unpaid' | 'paid'
  amount_subtotal: number
  amount_total: number
  currency: string
  client_reference_id: string | null
  metadata: Record<string, string>
  success_url: string
  cancel_url: string | null
  url: string | null
  payment_intent: string | null
  created: number
  expires_at: number
  livemode: false
}

export interface FakeEvent {
  id: string
  object: 'event'
  api_version: string
  created: number
  type: 'checkout.session.completed'
  data: { object: FakeCheckoutSession }
  livemode: false
  pending_webhooks: number
  request: { id: null; idempotency_key: null }
}

interface LineItemInput {
  price_data?: {
    currency?: unknown
    unit_amount?: unknown
    product_data?: { name?: unknown; description?: unknown }
  }
  quantity?: unknown
}

/** The version the events say they were rendered with (the SDK's own pinned version). */
const EVENT_API_VERSION = Stripe.API_VERSION

/** Stripe's sessions stay open for 24 hours unless told otherwise. */
const SESSION_LIFETIME_S = 24 * 3600

/** What Stripe's API answers for a request it refuses, so the SDK raises its own typed errors. */
class StripeStyleError extends Error {
  constructor(
    readonly status: number,
    readonly type: 'invalid_request_error' | 'authentication_error',
    message: string,
    readonly param?: string,
    readonly code?: string,
  ) {
    super(message)
  }
}

const randomId = (prefix: string) => `${prefix}_${randomBytes(12).toString('hex')}`
const nowSeconds = () => Math.floor(Date.now() / 1000)

function isRecord(value: unknown): value is Record<string, unknown> {
  return typeof value === 'object' && value !== null && !Array.isArray(value)
}

function requiredText(value: unknown, param: string): string {
  if (typeof value !== 'string' || value.trim() === '') throw new StripeStyleError(400, 'invalid_request_error', `Missing required param: ${param}.`, param, 'parameter_missing')
  return value
}

function wholeNumber(value: unknown, param: string, min: number): number {
  const number = typeof value === 'string' && /^\d+$/.test(value) ? Number(value) : Number.NaN
  if (!Number.isSafeInteger(number) || number < min) {
    throw new StripeStyleError(400, 'invalid_request_error', `Invalid integer: ${String(value)}`, param, 'parameter_invalid_integer')
  }
  return number
}

function absoluteUrl(value: unknown, param: string): string {
  const text = requiredText(value, param)
  if (!/^https?:\/\/[^\s]+$/.test(text)) throw new StripeStyleError(400, 'invalid_request_error', `Not a valid URL`, param, 'url_invalid')
  return text
}

/** The line items' total in the smallest unit of their one currency, as Stripe computes amount_total. */
export function totalOfLineItems(raw: unknown): { amount: number; currency: string } {
  // The SDK form-encodes arrays as line_items[0][…], which the parser hands over as an array or, past its
  // array limit, as an object keyed by index.
  const items: unknown[] = Array.isArray(raw) ? raw : isRecord(raw) ? Object.values(raw) : []
  if (items.length === 0) throw new StripeStyleError(400, 'invalid_request_error', 'Missing required param: line_items.', 'line_items', 'parameter_missing')
  let amount = 0
  let currency: string | null = null
  items.forEach((entry, index) => {
    const item = (isRecord(entry) ? entry : {}) as LineItemInput
    const at = `line_items[${index}]`
    const price = item.price_data
    if (!isRecord(price)) {
      throw new StripeStyleError(400, 'invalid_request_error', `Missing required param: ${at}[price_data].`, `${at}[price_data]`, 'parameter_missing')
    }
    const itemCurrency = requiredText(price.currency, `${at}[price_data][currency]`).toLowerCase()
    if (currency !== null && currency !== itemCurrency) {
      throw new StripeStyleError(400, 'invalid_request_error', 'All line items must be in the same currency.', `${at}[price_data][currency]`)
    }
    currency = itemCurrency
    requiredText(isRecord(price.product_data) ? price.product_data.name : undefined, `${at}[price_data][product_data][name]`)
    const unitAmount = wholeNumber(price.unit_amount, `${at}[price_data][unit_amount]`, 0)
    const quantity = wholeNumber(item.quantity ?? '1', `${at}[quantity]`, 1)
    amount += unitAmount * quantity
  })
  return { amount, currency: currency ?? 'usd' }
}

/** Stripe limits metadata to 50 keys of at most 40 characters and values of at most 500. */
function metadataOf(raw: unknown): Record<string, string> {
  if (raw === undefined || raw === '') return {}
  if (!isRecord(raw)) throw new StripeStyleError(400, 'invalid_request_error', 'Invalid object', 'metadata')
  const entries = Object.entries(raw)
  if (entries.length > 50) throw new StripeStyleError(400, 'invalid_request_error', 'Metadata can have at most 50 keys.', 'metadata')
  const metadata: Record<string, string> = {}
  for (const [key, value] of entries) {
    if (key.length > 40 || typeof value !== 'string' || value.length > 500) {
      throw new StripeStyleError(400, 'invalid_request_error', `Invalid metadata value for ${key}`, `metadata[${key}]`)
    }
    metadata[key] = value
  }
  return metadata
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c)
}

function formatAmount(amount: number, currency: string): string {
  try {
    return new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() }).format(amount / 100)
  } catch {
    return `${(amount / 100).toFixed(2)} ${currency.toUpperCase()}`
  }
}

function checkoutPage(session: FakeCheckoutSession, lines: readonly string[]): string {
  const total = formatAmount(session.amount_total, session.currency)
  const done = session.status === 'complete'
  const cancel = session.cancel_url ? `<a class="cancel" href="${escapeHtml(session.cancel_url)}">Cancel and go back</a>` : ''
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Local test checkout</title>
<link rel="icon" href="data:,">
<style>
  body { font-family: system-ui, sans-serif; background: #eef1f4; color: #1d2630; margin: 0; }
  main { max-width: 28rem; margin: 4rem auto; background: #fff; border-radius: 12px; padding: 2rem; box-shadow: 0 2px 10px rgba(0,0,0,.08); }
  .notice { background: #fff4d6; border: 1px solid #e5c36a; border-radius: 8px; padding: .75rem 1rem; font-size: .9rem; }
  ul { padding-left: 1.2rem; }
  .total { font-size: 1.6rem; font-weight: 600; margin: 1rem 0; }
  button { font: inherit; font-size: 1.05rem; background: #2457a6; color: #fff; border: 0; border-radius: 8px; padding: .8rem 1.4rem; cursor: pointer; width: 100%; }
  button:focus-visible, a:focus-visible { outline: 3px solid #f0a500; outline-offset: 2px; }
  .cancel { display: block; text-align: center; margin-top: 1rem; color: #2457a6; }
</style>
</head>
<body>
<main>
  <h1>Test checkout</h1>
  <p class="notice" role="note">This is a <strong>local stand-in</strong> for the payment provider's checkout. No card is asked for and no money moves.</p>
  <ul>${lines.map((line) => `<li>${escapeHtml(line)}</li>`).join('')}</ul>
  <p class="total" data-testid="checkout-total">${escapeHtml(total)}</p>
  ${
    done
      ? '<p role="status">This checkout is already paid.</p>'
      : `<form method="post" action="/pay/${encodeURIComponent(session.id)}"><button type="submit" data-testid="checkout-pay">Pay ${escapeHtml(total)}</button></form>`
  }
  ${cancel}
</main>
</body>
</html>`
}

/** Stripe's success URL template: `{CHECKOUT_SESSION_ID}` becomes the session's id. */
function successUrlOf(session: FakeCheckoutSession): string {
  return session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id)
}

/** Starts the stand-in on loopback. */
export async function startPaymentFake(options: PaymentFakeOptions): Promise<PaymentFake> {
  const host = options.host ?? '127.0.0.1'
  const attempts = Math.max(1, options.deliveryAttempts ?? 4)
  const retryDelayMs = options.retryDelayMs ?? 500
  const signer = new Stripe(options.secretKey)
  const sessions = new Map<string, { session: FakeCheckoutSession; lines: string[] }>()
  const sessionsByIdempotencyKey = new Map<string, string>()
  const events = new Map<string, FakeEvent>()
  const endpoints = new Map<string, string>()
  for (const url of options.webhookUrls ?? []) endpoints.set(randomId('we'), url)
  const pending = new Set<Promise<unknown>>()
  let baseUrl = ''

  async function deliverOnce(url: string, event: FakeEvent): Promise<WebhookDelivery> {
    // Stripe sends the event pretty-printed and signs exactly those bytes.
    const payload = JSON.stringify(event, null, 2)
    const signature = signer.webhooks.generateTestHeaderString({ payload, secret: options.webhookSecret })
    try {
      const response = await fetch(url, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json; charset=utf-8', 'Stripe-Signature': signature, 'User-Agent': 'Crackpoint-local-payment-stand-in' },
        body: payload,
        signal: AbortSignal.timeout(10_000),
      })
      await response.arrayBuffer()
      return { url, status: response.status }
    } catch {
      return { url, status: 0 }
    }
  }

  async function deliver(event: FakeEvent, tries: number): Promise<WebhookDelivery[]> {
    const results = await Promise.all(
      [...endpoints.values()].map(async (url) => {
        let result = await deliverOnce(url, event)
        for (let attempt = 1; attempt < tries && (result.status < 200 || result.status >= 300); attempt += 1) {
          await new Promise((resolve) => setTimeout(resolve, retryDelayMs * 2 ** (attempt - 1)))
          result = await deliverOnce(url, event)
        }
        return result
      }),
    )
    return results
  }

  function complete(id: string): FakeEvent {
    const entry = sessions.get(id)
    if (!entry) throw new StripeStyleError(404, 'invalid_request_error', `No such checkout.session: '${id}'`, 'id', 'resource_missing')
    if (entry.session.status === 'complete') {
      throw new StripeStyleError(400, 'invalid_request_error', 'This Checkout Session is already complete.', undefined, 'checkout_session_complete')
    }
    entry.session.status = 'complete'
    entry.session.payment_status = 'paid'
    entry.session.payment_intent = randomId('pi_test')
    entry.session.url = null
    const event: FakeEvent = {
      id: randomId('evt_test'),
      object: 'event',
      api_version: EVENT_API_VERSION,
      created: nowSeconds(),
      type: 'checkout.session.completed',
      data: { object: structuredClone(entry.session) },
      livemode: false,
      pending_webhooks: endpoints.size,
      request: { id: null, idempotency_key: null },
    }
    events.set(event.id, event)
    return event
  }

  const app = express()
  app.disable('x-powered-by')

  const requireKey = (req: Request, _res: Response, next: NextFunction) => {
    const header = req.get('authorization') ?? ''
    const key = header.startsWith('Bearer ') ? header.slice('Bearer '.length) : ''
    if (key !== options.secretKey) {
      throw new StripeStyleError(401, 'authentication_error', 'Invalid API Key provided.')
    }
    next()
  }
  // The SDK form-encodes nested parameters (line_items[0][price_data][currency]); qs reads them back.
  const form = express.urlencoded({ extended: true, limit: '256kb', parameterLimit: 2000 })

  app.post('/v1/checkout/sessions', requireKey, form, (req, res) => {
    const body: Record<string, unknown> = isRecord(req.body) ? req.body : {}
    const idempotencyKey = req.get('idempotency-key')
    const earlier = idempotencyKey ? sessionsByIdempotencyKey.get(idempotencyKey) : undefined
    const repeated = earlier ? sessions.get(earlier) : undefined
    if (repeated) {
      res.json(repeated.session)
      return
    }
    if (body.mode !== 'payment') {
      throw new StripeStyleError(400, 'invalid_request_error', 'This stand-in only takes mode=payment.', 'mode', 'parameter_invalid_empty')
    }
    const { amount, currency } = totalOfLineItems(body.line_items)
    const created = nowSeconds()
    const id = randomId('cs_test')
    const session: FakeCheckoutSession = {
      id,
      object: 'checkout.session',
      mode: 'payment',
      status: 'open',
      payment_status: 'unpaid',
      amount_subtotal: amount,
      amount_total: amount,
      currency,
      client_reference_id: typeof body.client_reference_id === 'string' ? body.client_reference_id : null,
      metadata: metadataOf(body.metadata),
      success_url: absoluteUrl(body.success_url, 'success_url'),
      cancel_url: body.cancel_url === undefined ? null : absoluteUrl(body.cancel_url, 'cancel_url'),
      url: `${baseUrl}/pay/${id}`,
      payment_intent: null,
      created,
      expires_at: created + SESSION_LIFETIME_S,
      livemode: false,
    }
    const items = (Array.isArray(body.line_items) ? body.line_items : isRecord(body.line_items) ? Object.values(body.line_items) : []) as LineItemInput[]
    const lines = items.map((item) => {
      const name = String(item.price_data?.product_data?.name ?? '')
      const quantity = Number(item.quantity ?? 1)
      return quantity === 1 ? name : `${quantity} × ${name}`
    })
    sessions.set(id, { session, lines })
    if (idempotencyKey) sessionsByIdempotencyKey.set(idempotencyKey, id)
    res.json(session)
  })

  app.get('/v1/checkout/sessions/:id', requireKey, (req, res) => {
    const entry = sessions.get(String(req.params.id))
    if (!entry) throw new StripeStyleError(404, 'invalid_request_error', `No such checkout.session: '${String(req.params.id)}'`, 'id', 'resource_missing')
    res.json(entry.session)
  })

  // The hosted checkout page a buyer's browser is sent to.
  app.get('/pay/:id', (req, res) => {
    const entry = sessions.get(String(req.params.id))
    if (!entry) {
      res.status(404).type('text/plain').send('There is no checkout with this address.')
      return
    }
    res.type('html').send(checkoutPage(entry.session, entry.lines))
  })

  app.post('/pay/:id', (req, res) => {
    const event = complete(String(req.params.id))
    // Stripe delivers events on its own time, not before the buyer is sent back: the return page waits for it.
    const delivery = deliver(event, attempts)
    pending.add(delivery)
    void delivery.finally(() => pending.delete(delivery))
    res.redirect(303, successUrlOf(event.data.object))
  })

  // Test controls. Not part of Stripe's API: the stand-in's own, for tests that play the buyer or replay events.
  const control = express.json({ limit: '16kb' })
  app.post('/_fake/webhook-endpoints', control, (req, res) => {
    const url = absoluteUrl(isRecord(req.body) ? req.body.url : undefined, 'url')
    const id = randomId('we')
    endpoints.set(id, url)
    res.status(201).json({ id, url })
  })
  app.delete('/_fake/webhook-endpoints/:id', (req, res) => {
    res.status(endpoints.delete(String(req.params.id)) ? 204 : 404).end()
  })
  app.post('/_fake/checkout/sessions/:id/complete', control, async (req, res) => {
    const event = complete(String(req.params.id))
    const send = !(isRecord(req.body) && req.body.deliver === false)
    // One attempt, answered only once it is made, so a test sees what the endpoint said.
    const deliveries = send ? await deliver(event, 1) : []
    res.json({ session: event.data.object, event, deliveries })
  })
  app.post('/_fake/events/:id/resend', async (req, res) => {
    const event = events.get(String(req.params.id))
    if (!event) throw new StripeStyleError(404, 'invalid_request_error', `No such event: '${String(req.params.id)}'`, 'id', 'resource_missing')
    res.json({ event, deliveries: await deliver(event, 1) })
  })

  app.use((_req: Request, _res: Response) => {
    throw new StripeStyleError(404, 'invalid_request_error', 'Unrecognized request URL. This local stand-in answers only what Crackpoint calls.')
  })
  app.use((error: unknown, _req: Request, res: Response, _next: NextFunction) => {
    if (error instanceof StripeStyleError) {
      res.status(error.status).json({
        error: { type: error.type, message: error.message, ...(error.param ? { param: error.param } : {}), ...(error.code ? { code: error.code } : {}) },
      })
      return
    }
    const status = typeof (error as { status?: unknown }).status === 'number' ? (error as { status: number }).status : 500
    res.status(status).json({ error: { type: status < 500 ? 'invalid_request_error' : 'api_error', message: status < 500 ? 'The request could not be read.' : 'The stand-in failed.' } })
  })

  const server = createServer(app)
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(options.port, host, () => {
      server.off('error', reject)
      resolve()
    })
  })
  const port = (server.address() as AddressInfo).port
  baseUrl = `http://${host}:${port}`
  return {
    host,
    port,
    baseUrl,
    async close() {
      await Promise.allSettled([...pending])
      server.closeAllConnections()
      await new Promise<void>((resolve) => server.close(() => resolve()))
    },
  }
}
