import { computed, ref, shallowRef } from 'vue'
import { defineStore } from 'pinia'
import { ApiError } from '@/api/api-error'
import type { ServerSentEvent } from '@/api/sse-parser'
import { sweepsApi } from '@/api/sweeps'
import type { Surface, SurfaceMetric, Sweep, SweepAxisRequest, SweepEstimate, SweepLevel, SweepState } from '@/api/types'
import { metricsFor } from '@/composables/sweep-metrics'

/** A dropped event stream is opened again after this long, unless the server's `retry:` says otherwise. */
export const RECONNECT_DELAY_MS = 1000
/** With the most streams a member may hold already open, wait longer before asking again. */
export const TOO_MANY_STREAMS_DELAY_MS = 5000

const FINISHED: ReadonlySet<SweepState> = new Set(['done', 'failed', 'cancelled'])
const STATES: ReadonlySet<string> = new Set(['queued', 'running', 'done', 'failed', 'cancelled'])

function messageOf(error: unknown, fallback: string): string {
  return error instanceof ApiError ? error.message : fallback
}

function isAbort(error: unknown): boolean {
  return error instanceof DOMException && error.name === 'AbortError'
}

function parseJson(text: string): Record<string, unknown> | null {
  try {
    const value: unknown = JSON.parse(text)
    return typeof value === 'object' && value !== null && !Array.isArray(value) ? (value as Record<string, unknown>) : null
  } catch {
    return null
  }
}

const numberOr = (value: unknown, fallback: number): number => (typeof value === 'number' && Number.isFinite(value) ? value : fallback)
const numberOrNull = (value: unknown): number | null => (typeof value === 'number' && Number.isFinite(value) ? value : null)

/** Where the results are cut: which axes lie along x and y, and the value index of the third. */
export interface SurfaceView {
  metric: SurfaceMetric
  slice: number
}

/**
 * The sweep of the open scenario: what a new one would cost, starting it, following its progress on its
 * event stream, and the surface of a chosen metric once every point is in. The surface's x is axis 1 and
 * y axis 0; a third axis is cut at its value number `slice`, asked for as that value (`at`).
 */
export const useSweepStore = defineStore('sweep', () => {
  const sweep = shallowRef<Sweep | null>(null)
  const surface = shallowRef<Surface | null>(null)
  const surfaceLoading = ref(false)
  const starting = ref(false)
  const error = ref<string | null>(null)
  const fieldErrors = ref<Record<string, string>>({})
  /** Code of the last refusal to start, e.g. `quota_exceeded`. */
  const errorCode = ref<string | null>(null)
  const pointsPerSecond = ref<number | null>(null)
  const secondsLeft = ref<number | null>(null)
  const metric = ref<SurfaceMetric>('crackBoostPa')
  const slice = ref(0)

  const estimate = shallowRef<SweepEstimate | null>(null)
  const estimateLoading = ref(false)
  const estimateError = ref<string | null>(null)
  /** The estimate's refusals by path: the same checks starting would make, shown before it. */
  const estimateFields = ref<Record<string, string>>({})

  let timer: ReturnType<typeof setTimeout> | null = null
  let controller: AbortController | null = null
  let surfaceController: AbortController | null = null
  let estimateController: AbortController | null = null
  /** Guards against answers that arrive after the user moved to another sweep or scenario. */
  let generation = 0
  let retryMs = RECONNECT_DELAY_MS

  const running = computed(() => sweep.value !== null && !FINISHED.has(sweep.value.state))
  const progress = computed(() => {
    const s = sweep.value
    if (!s || s.pointCount === 0) return 0
    return Math.min(100, (100 * s.pointsDone) / s.pointCount)
  })
  const metrics = computed(() => (sweep.value ? metricsFor(sweep.value.level) : []))
  /** The axis the surface is cut along, for a three-axis sweep. */
  const sliceAxis = computed(() => sweep.value?.axes[2] ?? null)

  function stopFollowing(): void {
    if (timer) clearTimeout(timer)
    timer = null
    controller?.abort()
    controller = null
  }

  function reset(): void {
    stopFollowing()
    surfaceController?.abort()
    generation += 1
    sweep.value = null
    surface.value = null
    surfaceLoading.value = false
    error.value = null
    errorCode.value = null
    fieldErrors.value = {}
    pointsPerSecond.value = null
    secondsLeft.value = null
  }

  async function loadSurface(mine: number): Promise<void> {
    const s = sweep.value
    if (!s || s.state !== 'done' || s.axes.length < 2) return
    surfaceController?.abort()
    const own = new AbortController()
    surfaceController = own
    surfaceLoading.value = true
    try {
      const cut = s.axes[2]?.values[slice.value]
      const query = { metric: metric.value, x: 1, y: 0, ...(cut !== undefined ? { at: cut } : {}) }
      const result = await sweepsApi.surface(s.id, query, own.signal)
      if (mine === generation) surface.value = result
    } catch (cause) {
      if (isAbort(cause)) return
      if (mine === generation) error.value = messageOf(cause, 'The results of the sweep could not be loaded.')
    } finally {
      if (surfaceController === own) {
        surfaceController = null
        surfaceLoading.value = false
      }
    }
  }

  /** Shows another metric or another cut of the third axis. */
  async function view(next: Partial<SurfaceView>): Promise<void> {
    if (next.metric !== undefined) metric.value = next.metric
    if (next.slice !== undefined) slice.value = next.slice
    error.value = null
    await loadSurface(generation)
  }

  async function finish(mine: number): Promise<void> {
    const s = sweep.value
    if (!s || mine !== generation) return
    secondsLeft.value = null
    if (s.state === 'done') await loadSurface(mine)
    else if (s.state === 'failed') error.value = 'The sweep failed on the server. Its finished points are kept.'
    else if (s.state === 'cancelled') error.value = 'The sweep was cancelled.'
  }

  function applyProgress(data: Record<string, unknown>): void {
    const s = sweep.value
    if (!s) return
    const state = typeof data.state === 'string' && STATES.has(data.state) ? (data.state as SweepState) : s.state
    sweep.value = {
      ...s,
      state,
      pointCount: numberOr(data.pointCount, s.pointCount),
      pointsDone: numberOr(data.pointsDone, s.pointsDone),
      pointsFailed: numberOr(data.pointsFailed, s.pointsFailed),
    }
    if ('pointsPerSecond' in data) pointsPerSecond.value = numberOrNull(data.pointsPerSecond)
    if ('secondsLeft' in data) secondsLeft.value = numberOrNull(data.secondsLeft)
  }

  function onEvent(event: ServerSentEvent): void {
    if (event.retryMs !== undefined) retryMs = event.retryMs
    if (event.type !== 'progress' && event.type !== 'state') return
    const data = parseJson(event.data)
    if (!data) return
    // A state event may carry the whole sweep view rather than its counters alone.
    const body = typeof data.sweep === 'object' && data.sweep !== null ? (data.sweep as Record<string, unknown>) : data
    applyProgress(body)
  }

  async function follow(id: string, mine: number): Promise<void> {
    if (mine !== generation) return
    const own = new AbortController()
    controller = own
    let crowded = false
    try {
      await sweepsApi.events(id, onEvent, own.signal)
    } catch (cause) {
      if (isAbort(cause) || mine !== generation) return
      // A dropped connection, or too many streams open at once (other tabs), is tried again shortly;
      // any other answer (404, 401) ends the follow.
      if (cause instanceof ApiError && cause.status !== 0 && cause.status !== 429) {
        error.value = messageOf(cause, 'The sweep could not be followed.')
        return
      }
      crowded = cause instanceof ApiError && cause.status === 429
    } finally {
      if (controller === own) controller = null
    }
    if (mine !== generation) return
    if (sweep.value && FINISHED.has(sweep.value.state)) return finish(mine)
    timer = setTimeout(() => void follow(id, mine), crowded ? Math.max(retryMs, TOO_MANY_STREAMS_DELAY_MS) : retryMs)
  }

  async function start(scenarioId: string, level: SweepLevel, axes: SweepAxisRequest[]): Promise<void> {
    reset()
    const mine = generation
    starting.value = true
    try {
      const result = await sweepsApi.create(scenarioId, level, axes)
      if (mine !== generation) return
      sweep.value = result.sweep
      metric.value = metricsFor(level)[0]!.key
      slice.value = 0
      void follow(result.sweep.id, mine)
    } catch (cause) {
      if (mine !== generation) return
      if (cause instanceof ApiError) {
        fieldErrors.value = { ...cause.fields }
        errorCode.value = cause.code
      }
      error.value = messageOf(cause, 'The sweep could not be started.')
    } finally {
      starting.value = false
    }
  }

  const cancelling = ref(false)

  /** Stops the sweep on the server; the points already computed stay. */
  async function cancel(): Promise<void> {
    const s = sweep.value
    if (!s || FINISHED.has(s.state)) return
    const mine = generation
    cancelling.value = true
    try {
      const result = await sweepsApi.cancel(s.id)
      if (mine !== generation) return
      stopFollowing()
      sweep.value = result.sweep
      await finish(mine)
    } catch (cause) {
      if (mine === generation) error.value = messageOf(cause, 'The sweep could not be stopped.')
    } finally {
      cancelling.value = false
    }
  }

  /** Asks what a sweep of these axes would cost; a newer question replaces one still unanswered. */
  async function estimateCost(scenarioId: string, level: SweepLevel, axes: SweepAxisRequest[]): Promise<void> {
    estimateController?.abort()
    const own = new AbortController()
    estimateController = own
    estimateLoading.value = true
    try {
      const result = await sweepsApi.estimate(scenarioId, level, axes, own.signal)
      estimate.value = result.estimate
      estimateError.value = null
      estimateFields.value = {}
    } catch (cause) {
      if (isAbort(cause)) return
      estimate.value = null
      estimateFields.value = cause instanceof ApiError ? { ...cause.fields } : {}
      estimateError.value = messageOf(cause, 'The cost could not be worked out.')
    } finally {
      if (estimateController === own) {
        estimateController = null
        estimateLoading.value = false
      }
    }
  }

  /** Forgets the estimate, e.g. while the axes are not valid. */
  function clearEstimate(): void {
    estimateController?.abort()
    estimateController = null
    estimateLoading.value = false
    estimate.value = null
    estimateError.value = null
    estimateFields.value = {}
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
      metric.value = metricsFor(latest.level)[0]!.key
      slice.value = 0
      if (latest.state === 'done') await loadSurface(mine)
      else if (!FINISHED.has(latest.state)) void follow(latest.id, mine)
    } catch {
      // An earlier sweep is a convenience; the panel still starts a new one.
    }
  }

  return {
    sweep,
    surface,
    surfaceLoading,
    starting,
    error,
    errorCode,
    fieldErrors,
    pointsPerSecond,
    secondsLeft,
    metric,
    slice,
    metrics,
    sliceAxis,
    estimate,
    estimateLoading,
    estimateError,
    estimateFields,
    running,
    progress,
    cancelling,
    estimateCost,
    clearEstimate,
    start,
    cancel,
    view,
    showLatest,
    stopFollowing,
    reset,
  }
})
