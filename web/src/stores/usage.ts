import { computed, ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { usageApi, type Quotas, type Usage } from '@/api/usage'
import { useSessionStore } from './session'

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/** What the API said about one quota field: its own field message first, else the whole answer's. */
function fieldMessage(error: unknown, fallback: string): string {
  if (error instanceof ApiError) return error.fields.monthlyComputeUnits ?? error.message
  return fallback
}

function without(record: Record<string, string>, key: string): Record<string, string> {
  return Object.fromEntries(Object.entries(record).filter(([k]) => k !== key))
}

/** The key of the workspace's quota among the quota fields (members are keyed by their id). */
export const WORKSPACE_QUOTA = 'workspace'

/**
 * Compute usage of one month (the caller's own; for admins every member's and the workspace's) and, for
 * admins, the quotas and their editing. Errors of a quota save are kept per field, keyed by member id or
 * WORKSPACE_QUOTA, so the page shows each beside its own field.
 */
export const useUsageStore = defineStore('usage', () => {
  const session = useSessionStore()
  const usage = ref<Usage | null>(null)
  const quotas = ref<Quotas | null>(null)
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  const saving = ref<Record<string, boolean>>({})
  const fieldErrors = ref<Record<string, string>>({})
  const saved = ref<string | null>(null)
  let loadAbort: AbortController | null = null

  const isAdmin = computed(() => session.user?.role === 'admin')

  async function load(month?: string): Promise<void> {
    loadAbort?.abort()
    const abort = new AbortController()
    loadAbort = abort
    loading.value = true
    loadError.value = null
    try {
      const [answer, quotaAnswer] = await Promise.all([
        usageApi.get(month, abort.signal),
        isAdmin.value ? usageApi.quotas() : Promise.resolve(null),
      ])
      if (abort.signal.aborted) return
      usage.value = answer.usage
      quotas.value = quotaAnswer?.quotas ?? null
    } catch (error) {
      if (error instanceof DOMException && error.name === 'AbortError') return
      loadError.value = messageOf(error, 'Usage could not be loaded.')
    } finally {
      if (loadAbort === abort) loading.value = false
    }
  }

  async function save(key: string, label: string, write: () => Promise<{ quotas: Quotas }>): Promise<boolean> {
    saving.value = { ...saving.value, [key]: true }
    fieldErrors.value = without(fieldErrors.value, key)
    saved.value = null
    try {
      quotas.value = (await write()).quotas
      saved.value = `${label} saved.`
      // What is left follows the quota: read the month again.
      await load(usage.value?.month)
      return true
    } catch (error) {
      fieldErrors.value = { ...fieldErrors.value, [key]: fieldMessage(error, 'The quota could not be saved.') }
      return false
    } finally {
      saving.value = { ...saving.value, [key]: false }
    }
  }

  function saveWorkspaceQuota(units: number): Promise<boolean> {
    return save(WORKSPACE_QUOTA, 'Workspace quota', () => usageApi.setWorkspaceQuota(units))
  }

  /** null removes the member's own limit. */
  function saveMemberQuota(userId: string, displayName: string, units: number | null): Promise<boolean> {
    return save(userId, `Limit for ${displayName}`, () => usageApi.setMemberQuota(userId, units))
  }

  /** A field the page found wrong before sending (not a whole number, say). */
  function setFieldError(key: string, message: string | null): void {
    const rest = without(fieldErrors.value, key)
    fieldErrors.value = message === null ? rest : { ...rest, [key]: message }
  }

  return { usage, quotas, loading, loadError, saving, fieldErrors, saved, isAdmin, load, saveWorkspaceQuota, saveMemberQuota, setFieldError }
})
