import { ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import type { DownloadedFile } from '@/api/download'
import { sweepsApi, type PointRange, type PointsQuery } from '@/api/sweeps'
import type { SweepPointPage, UnitSystem } from '@/api/types'

/** The stored points of a finished sweep, a page at a time in the server's order, and their CSV. */
export const useSweepPointsStore = defineStore('sweep-points', () => {
  const page = shallowRef<SweepPointPage | null>(null)
  const loading = ref(false)
  const error = ref<string | null>(null)
  const exporting = ref(false)
  const exportError = ref<string | null>(null)
  let controller: AbortController | null = null

  async function load(sweepId: string, query: PointsQuery): Promise<void> {
    controller?.abort()
    const own = new AbortController()
    controller = own
    loading.value = true
    error.value = null
    try {
      page.value = await sweepsApi.points(sweepId, query, own.signal)
    } catch (cause) {
      if (cause instanceof DOMException && cause.name === 'AbortError') return
      error.value = cause instanceof ApiError ? cause.message : 'The points could not be loaded.'
    } finally {
      if (controller === own) {
        controller = null
        loading.value = false
      }
    }
  }

  /** The whole sweep as CSV in `units`; null when it could not be fetched (the reason is in exportError). */
  async function exportCsv(sweepId: string, units: UnitSystem, range?: PointRange): Promise<DownloadedFile | null> {
    exporting.value = true
    exportError.value = null
    try {
      return await sweepsApi.pointsCsv(sweepId, units, range)
    } catch (cause) {
      exportError.value = cause instanceof ApiError ? cause.message : 'The CSV could not be made.'
      return null
    } finally {
      exporting.value = false
    }
  }

  function reset(): void {
    controller?.abort()
    controller = null
    page.value = null
    loading.value = false
    error.value = null
    exportError.value = null
  }

  return { page, loading, error, exporting, exportError, load, exportCsv, reset }
})
