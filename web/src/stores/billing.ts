import { ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { billingApi, type ComputePack, type Purchase } from '@/api/billing'

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

const isAbort = (error: unknown) => error instanceof DOMException && error.name === 'AbortError'

/** How often the return page asks whether the provider's confirmation has arrived, and for how long. */
export const CONFIRMATION_POLL_MS = 1000
export const CONFIRMATION_WAIT_MS = 120_000

/**
 * Buying compute (admins): the packs on sale, the workspace's purchases, opening a checkout at the
 * payment provider, and, back from the provider's page, the purchase followed until its payment is
 * confirmed by the provider's webhook and the units are credited.
 */
export const useBillingStore = defineStore('billing', () => {
  const packs = ref<ComputePack[]>([])
  const purchases = ref<Purchase[]>([])
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  /** The pack whose checkout is being opened. */
  const buying = ref<string | null>(null)
  const buyError = ref<string | null>(null)
  /** The purchase the buyer came back for, as last read. */
  const returned = ref<Purchase | null>(null)
  const returnError = ref<string | null>(null)
  /** Still waiting for the provider's confirmation after CONFIRMATION_WAIT_MS. */
  const confirmationLate = ref(false)
  let loadAbort: AbortController | null = null
  let pollAbort: AbortController | null = null

  async function load(): Promise<void> {
    loadAbort?.abort()
    const abort = new AbortController()
    loadAbort = abort
    loading.value = true
    loadError.value = null
    try {
      const [packAnswer, purchaseAnswer] = await Promise.all([billingApi.packs(), billingApi.purchases(abort.signal)])
      packs.value = packAnswer.packs
      purchases.value = purchaseAnswer.items
    } catch (error) {
      if (isAbort(error)) return
      loadError.value = messageOf(error, 'Billing could not be loaded.')
    } finally {
      if (loadAbort === abort) loading.value = false
    }
  }

  /** Opens the provider's checkout for a pack and answers the page to send the browser to. */
  async function checkout(packId: string): Promise<string | null> {
    buying.value = packId
    buyError.value = null
    try {
      return (await billingApi.checkout(packId)).checkoutUrl
    } catch (error) {
      buyError.value = messageOf(error, 'The checkout could not be opened.')
      return null
    } finally {
      buying.value = null
    }
  }

  /** Reads the purchase until it is paid (the webhook has landed) or the wait runs out. */
  async function followPurchase(id: string): Promise<void> {
    stopFollowing()
    const abort = new AbortController()
    pollAbort = abort
    returned.value = null
    returnError.value = null
    confirmationLate.value = false
    const started = Date.now()
    while (!abort.signal.aborted) {
      try {
        const { purchase } = await billingApi.purchase(id, abort.signal)
        returned.value = purchase
        if (purchase.state === 'paid') {
          await load()
          return
        }
      } catch (error) {
        if (isAbort(error)) return
        returnError.value = messageOf(error, 'The purchase could not be read.')
        return
      }
      if (Date.now() - started > CONFIRMATION_WAIT_MS) {
        confirmationLate.value = true
        return
      }
      await new Promise((resolve) => setTimeout(resolve, CONFIRMATION_POLL_MS))
    }
  }

  function stopFollowing(): void {
    pollAbort?.abort()
    pollAbort = null
  }

  return {
    packs,
    purchases,
    loading,
    loadError,
    buying,
    buyError,
    returned,
    returnError,
    confirmationLate,
    load,
    checkout,
    followPurchase,
    stopFollowing,
  }
})
