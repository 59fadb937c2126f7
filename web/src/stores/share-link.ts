import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { sharingApi, type CreatedShareLink, type ShareLink, type ShareTarget } from '@/api/sharing'

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/**
 * The share links of one scenario or sweep, for the share dialog. The code of a new link lives only
 * here, until the dialog closes: the server never shows it again.
 */
export const useShareLinkStore = defineStore('share-link', () => {
  const target = ref<{ kind: ShareTarget; id: string } | null>(null)
  const links = ref<ShareLink[]>([])
  const created = shallowRef<CreatedShareLink | null>(null)
  const loading = ref(false)
  const creating = ref(false)
  const sending = ref(false)
  const error = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})
  const sentTo = ref<string | null>(null)

  async function open(kind: ShareTarget, id: string): Promise<void> {
    target.value = { kind, id }
    created.value = null
    sentTo.value = null
    error.value = null
    fieldErrors.value = {}
    loading.value = true
    try {
      links.value = (await sharingApi.list(kind, id)).items
    } catch (cause) {
      links.value = []
      error.value = messageOf(cause, 'The links could not be loaded.')
    } finally {
      loading.value = false
    }
  }

  async function create(label: string, expiresInDays: number): Promise<void> {
    if (!target.value) return
    creating.value = true
    error.value = null
    fieldErrors.value = {}
    sentTo.value = null
    try {
      const result = await sharingApi.create({ target: target.value.kind, targetId: target.value.id, label, expiresInDays })
      created.value = result
      links.value = [result.shareLink, ...links.value]
    } catch (cause) {
      if (cause instanceof ApiError) fieldErrors.value = { ...cause.fields }
      error.value = messageOf(cause, 'The link could not be made.')
    } finally {
      creating.value = false
    }
  }

  async function send(email: string, note: string): Promise<void> {
    const made = created.value
    if (!made) return
    sending.value = true
    error.value = null
    fieldErrors.value = {}
    sentTo.value = null
    try {
      sentTo.value = (await sharingApi.send(made.shareLink.id, made.token, email, note)).sentTo
    } catch (cause) {
      if (cause instanceof ApiError) fieldErrors.value = { ...cause.fields }
      error.value = messageOf(cause, 'The e-mail could not be sent.')
    } finally {
      sending.value = false
    }
  }

  async function revoke(id: string): Promise<void> {
    error.value = null
    try {
      await sharingApi.revoke(id)
      links.value = links.value.map((l) => (l.id === id ? { ...l, status: 'revoked' as const, revokedAt: new Date().toISOString() } : l))
      if (created.value?.shareLink.id === id) created.value = null
    } catch (cause) {
      error.value = messageOf(cause, 'The link could not be revoked.')
    }
  }

  function forgetCode(): void {
    created.value = null
    sentTo.value = null
  }

  return { target, links, created, loading, creating, sending, error, fieldErrors, sentTo, open, create, send, revoke, forgetCode }
})
