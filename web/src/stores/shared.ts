import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { sharingApi, type SharedView } from '@/api/sharing'
import type { Surface } from '@/api/types'

/** What the holder of a share link sees: read-only, without an account. */
export const useSharedStore = defineStore('shared', () => {
  const view = shallowRef<SharedView | null>(null)
  const surface = shallowRef<Surface | null>(null)
  const loading = ref(false)
  const error = ref<string | null>(null)
  /** The link is gone (revoked, expired or never made): nothing to retry. */
  const missing = ref(false)

  async function load(token: string): Promise<void> {
    loading.value = true
    error.value = null
    missing.value = false
    view.value = null
    surface.value = null
    try {
      const shown = await sharingApi.open(token)
      view.value = shown
      const sweep = shown.sweep
      if (sweep && sweep.axes.length >= 2 && sweep.pointsDone > 0) {
        // The static level's crack boost, or the boost a pull settles at when only pulls were run.
        surface.value = await sharingApi.surface(token, sweep.level === 'dynamic' ? 'settledBoostPa' : 'crackBoostPa', 1, 0)
      }
    } catch (cause) {
      missing.value = cause instanceof ApiError && cause.status === 404
      error.value = cause instanceof ApiError ? cause.message : 'The shared page could not be loaded.'
    } finally {
      loading.value = false
    }
  }

  return { view, surface, loading, error, missing, load }
})
