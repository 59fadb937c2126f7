import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { teamApi, type InvitationPreview } from '@/api/team'
import { useSessionStore } from './session'

/** One invitation link as its holder sees it, and accepting it (which signs the new member in). */
export const useInvitationStore = defineStore('invitation', () => {
  const preview = shallowRef<InvitationPreview | null>(null)
  const loading = ref(false)
  const missing = ref(false)
  const error = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})
  const accepting = ref(false)

  async function load(token: string): Promise<void> {
    loading.value = true
    missing.value = false
    error.value = null
    preview.value = null
    try {
      preview.value = (await teamApi.previewInvitation(token)).invitation
    } catch (cause) {
      missing.value = cause instanceof ApiError && cause.status === 404
      error.value = cause instanceof ApiError ? cause.message : 'The invitation could not be loaded.'
    } finally {
      loading.value = false
    }
  }

  async function accept(token: string, displayName: string, password: string): Promise<boolean> {
    accepting.value = true
    error.value = null
    fieldErrors.value = {}
    try {
      useSessionStore().adopt(await teamApi.acceptInvitation(token, displayName, password))
      return true
    } catch (cause) {
      if (cause instanceof ApiError) fieldErrors.value = { ...cause.fields }
      error.value = cause instanceof ApiError ? cause.message : 'Joining did not work. Try again.'
      return false
    } finally {
      accepting.value = false
    }
  }

  return { preview, loading, missing, error, fieldErrors, accepting, load, accept }
})
