import { defineComponent, h } from 'vue'
import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import type { Purchase } from '@/api/billing'
import { useSessionStore } from '@/stores/session'
import BillingView from '@/views/BillingView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  vi.useRealTimers()
})

const PACKS = [
  { id: 'units-10k', name: '10,000 compute units', computeUnits: 10_000, priceCents: 1_900, currency: 'usd' },
  { id: 'units-50k', name: '50,000 compute units', computeUnits: 50_000, priceCents: 7_900, currency: 'usd' },
]

const ROUTES = [
  { path: '/billing', component: { render: () => null } },
  { path: '/usage', name: 'usage', component: { render: () => null } },
]

function purchase(state: Purchase['state']): Purchase {
  return {
    id: 'p-1',
    packId: 'units-50k',
    packName: '50,000 compute units',
    computeUnits: 50_000,
    amountCents: 7_900,
    currency: 'usd',
    state,
    buyerName: 'Shop admin',
    checkoutUrl: state === 'pending' ? 'http://127.0.0.1:55045/pay/cs_test_1' : null,
    createdAt: '2026-12-02T01:00:00.000Z',
    paidAt: state === 'paid' ? '2026-12-02T01:01:00.000Z' : null,
  }
}

function pageAs(role: 'admin' | 'engineer') {
  return defineComponent({
    setup() {
      useSessionStore().user = {
        id: 'u1',
        email: `${role}@harrowlane.example`,
        displayName: `Shop ${role}`,
        role,
        unitSystem: 'us',
        workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
      }
      return () => h(BillingView)
    },
  })
}

describe('BillingView', () => {
  it('shows the packs with their prices and an empty history', async () => {
    const { fetchStub } = routeFetch({
      'GET /api/billing/packs': () => [200, { packs: PACKS }],
      'GET /api/billing/purchases': () => [200, { items: [], total: 0 }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'), ROUTES, '/billing')
    await flushPromises()

    expect(wrapper.find('[data-testid="pack-units-10k"]').text()).toContain('$19.00')
    expect(wrapper.find('[data-testid="pack-units-50k"]').text()).toContain('50,000 compute units')
    expect(wrapper.find('[data-testid="buy-units-50k"]').attributes('aria-label')).toBe('Buy 50,000 compute units for $79.00')
    expect(wrapper.find('[data-testid="no-purchases"]').text()).toBe('No purchases yet.')
  })

  it("opens the provider's checkout for the pack pressed and sends the browser there", async () => {
    const { fetchStub, requests } = routeFetch({
      'GET /api/billing/packs': () => [200, { packs: PACKS }],
      'GET /api/billing/purchases': () => [200, { items: [], total: 0 }],
      'POST /api/billing/checkout': () => [201, { checkoutUrl: 'http://127.0.0.1:55045/pay/cs_test_1', purchase: purchase('pending') }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const assign = vi.fn()
    vi.stubGlobal('location', { ...window.location, assign })
    const { wrapper } = await mountApp(pageAs('admin'), ROUTES, '/billing')
    await flushPromises()

    await wrapper.find('[data-testid="buy-units-50k"]').trigger('click')
    await flushPromises()
    expect(requests.find((r) => r.key === 'POST /api/billing/checkout')?.body).toEqual({ packId: 'units-50k' })
    expect(assign).toHaveBeenCalledWith('http://127.0.0.1:55045/pay/cs_test_1')
  })

  it('says why when the checkout cannot be opened', async () => {
    const { fetchStub } = routeFetch({
      'GET /api/billing/packs': () => [200, { packs: PACKS }],
      'GET /api/billing/purchases': () => [200, { items: [], total: 0 }],
      'POST /api/billing/checkout': () => [502, { error: { code: 'payment_provider_unavailable', message: 'The payment provider could not be reached.' } }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'), ROUTES, '/billing')
    await flushPromises()
    await wrapper.find('[data-testid="buy-units-10k"]').trigger('click')
    await flushPromises()
    expect(wrapper.find('[data-testid="buy-error"]').text()).toBe('The payment provider could not be reached.')
  })

  it('back from the checkout, waits for the confirmation and then shows the units credited', async () => {
    vi.useFakeTimers({ toFake: ['setTimeout'] })
    let reads = 0
    const { fetchStub } = routeFetch({
      'GET /api/billing/packs': () => [200, { packs: PACKS }],
      'GET /api/billing/purchases': () => [200, { items: reads > 1 ? [purchase('paid')] : [purchase('pending')], total: 1 }],
      'GET /api/billing/purchases/p-1': () => {
        reads += 1
        return [200, { purchase: purchase(reads > 1 ? 'paid' : 'pending') }]
      },
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'), ROUTES, '/billing?purchase=p-1')
    await flushPromises()

    expect(wrapper.find('[data-testid="billing-waiting"]').text()).toContain('Waiting for the payment provider')
    expect(wrapper.find('[data-testid="purchase-history"]').text()).toContain('Awaiting payment')

    await vi.advanceTimersByTimeAsync(1000)
    await flushPromises()
    expect(wrapper.find('[data-testid="billing-credited"]').text()).toContain('50,000 compute units were added to this month for $79.00')
    expect(wrapper.find('[data-testid="purchase-history"]').text()).toContain('Credited')
  })

  it('tells a member who is not an admin who can buy, and asks the API nothing', async () => {
    const { fetchStub, requests } = routeFetch({})
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('engineer'), ROUTES, '/billing')
    await flushPromises()
    expect(wrapper.find('[data-testid="billing-admins-only"]').text()).toContain('Only a workspace admin can buy compute')
    expect(requests).toHaveLength(0)
  })
})
