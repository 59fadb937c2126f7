import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import { sweepsApi } from '@/api/sweeps'
import type { Surface, Sweep, SweepAxisRequest } from '@/api/types'

/** How often a running sweep is asked for its progress. */
export const POLL_INTERVAL_MS = 500

const FINISHED: ReadonlySet<Sweep['state']> = new Set(['done', 'failed', 'cancelled'])

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

/**
 * The sweep of the open scenario: starting it, following its progress by polling, and its crack-boost
 * surface once every point is in. The surface's axes are the sweep's: x is axis 1, y is axis 0.
 */
export const useSweepStore = defineStore('sweep', () => {
  const sweep = shallowRef<Sweep | null>(null)
  const surface = shallowRef<Surface | null>(null)
  const starting = ref(false)
  const error = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})
  let timer: ReturnType<typeof setTimeout> | null = null
  let controller: AbortController | null = null
  /** Guards against answers that arrive after the user moved to another sweep or scenario. */
  let generation = 0

  const running = computed(() => sweep.value !== null && !FINISHED.has(sweep.value.state))
  const progress = computed(() => {
    const s = sweep.value
    if (!s || s.pointCount === 0) return 0
    return Math.min(100, (100 * s.pointsDone) / s.pointCount)
  })

  function stopPolling(): void {
    if (timer) clearTimeout(timer)
    timer = null
    controller?.abort()
    controller = null
  }

  function reset(): void {
    stopPolling()
    generation += 1
    sweep.value = null
    surface.value = null
    error.value = null
    fieldErrors.value = {}
  }

  async function loadSurface(id: string, mine: number): Promise<void> {
    try {
      const result = await sweepsApi.surface(id, 'crackBoostPa', 1, 0)
      if (mine === generation) surface.value = result
    } catch (cause) {
      if (mine === generation) error.value = messageOf(cause, 'The results of the sweep could not be loaded.')
    }
  }

  async function follow(id: string, mine: number): Promise<void> {
    if (mine !== generation) return
    controller = new AbortController()
    try {
      const result = await sweepsApi.get(id, controller.signal)
      if (mine !== generation) return
      sweep.value = result.sweep
    } catch (cause) {
      if (cause instanceof DOMException && cause.name === 'AbortError') return
      if (mine !== generation) return
      // A dropped poll is retried; an answer from the API (404, 401) ends the follow.
      if (cause instanceof ApiError && cause.status !== 0) {
        error.value = messageOf(cause, 'The sweep could not be followed.')
        return
      }
    } finally {
      controller = null
    }
    const s = sweep.value
    if (s && FINISHED.has(s.state)) {
      if (s.state === 'done') await loadSurface(s.id, mine)
      else if (s.state === 'failed') error.value = 'The sweep failed on the server. Its finished points are kept.'
      else error.value = 'The sweep was cancelled.'
      return
    }
    timer = setTimeout(() => void follow(id, mine), POLL_INTERVAL_MS)
  }

  async function start(scenarioId: string, axes: SweepAxisRequest[]): Promise<void> {
    reset()
    const mine = generation
    starting.value = true
    try {
      const result = await sweepsApi.create(scenarioId, axes)
      if (mine !== generation) return
      sweep.value = result.sweep
      void follow(result.sweep.id, mine)
    } catch (cause) {
      if (mine !== generation) return
      if (cause instanceof ApiError) fieldErrors.value = { ...cause.fields }
      error.value = messageOf(cause, 'The sweep could not be started.')
    } finally {
      starting.value = false
    }
  }

  /** Shows the newest sweep of a scenario: its surface when done, its progress while it runs. */
  async function showLatest(scenarioId: string): Promise<void> {
    reset()
    const mine = generation
    try {
      const { items } = await sweepsApi.listForScenario(scenarioId)
      const latest = [...items].sort((a, b) => b.createdAt.localeCompare(a.createdAt))[0]
      if (!latest || mine !== generation) return
      sweep.value = latest
      if (latest.state === 'done') await loadSurface(latest.id, mine)
      else if (!FINISHED.has(latest.state)) void follow(latest.id, mine)
    } catch {
      // An earlier sweep is a convenience; the panel still starts a new one.
    }
  }

  return { sweep, surface, starting, error, fieldErrors, running, progress, start, showLatest, stopPolling, reset }
})
