import { ref } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { queueHealthApi, type QueueHealth } from '@/api/queue-health'

/** The sweep queue's health as the admin's usage page shows it; read on demand, never polled. */
export const useQueueHealthStore = defineStore('queue-health', () => {
  const health = ref<QueueHealth | null>(null)
  const loading = ref(false)
  const loadError = ref<string | null>(null)
  let loadAbort: AbortController | null = null

  async function load(): Promise<void> {
    loadAbort?.abort()
    const abort = new AbortController()
    loadAbort = abort
    loading.value = true
    loadError.value = null
    try {
      health.value = (await queueHealthApi.get(abort.signal)).queueHealth
    } catch (error) {
      if (abort.signal.aborted) return
      loadError.value = error instanceof ApiError ? error.message : 'The queue health could not be loaded.'
    } finally {
      if (loadAbort === abort) loading.value = false
    }
  }

  return { health, loading, loadError, load }
})
