import { request } from './http'

/** A pack of compute units on sale; the price is in the currency's smallest unit (cents). */
export interface ComputePack {
  id: string
  name: string
  computeUnits: number
  priceCents: number
  currency: string
}

export interface Purchase {
  id: string
  packId: string
  packName: string
  computeUnits: number
  amountCents: number
  currency: string
  /** Pending until the payment provider's signed confirmation has credited the units. */
  state: 'pending' | 'paid'
  buyerName: string | null
  /** The provider's checkout page while pending; null once paid. */
  checkoutUrl: string | null
  createdAt: string
  paidAt: string | null
}

export const billingApi = {
  packs(): Promise<{ packs: ComputePack[] }> {
    return request('/api/billing/packs')
  },
  checkout(packId: string): Promise<{ checkoutUrl: string; purchase: Purchase }> {
    return request('/api/billing/checkout', { method: 'POST', body: { packId } })
  },
  purchases(signal?: AbortSignal): Promise<{ items: Purchase[]; total: number }> {
    return request('/api/billing/purchases', { query: { limit: 50 }, signal })
  },
  purchase(id: string, signal?: AbortSignal): Promise<{ purchase: Purchase }> {
    return request(`/api/billing/purchases/${encodeURIComponent(id)}`, { signal })
  },
}
