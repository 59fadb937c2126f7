import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { Sweep } from '@/api/types'
import { POLL_INTERVAL_MS, useSweepStore } from '@/stores/sweep'
import { routeFetch } from './mount-app'

const axes = [
  { path: 'springs.0.seatForceN', values: [100, 150] },
  { path: 'exhaust.ratio', values: [1, 1.5, 2] },
]

function sweepAt(pointsDone: number, state: Sweep['state']): Sweep {
  return {
    id: 'w1',
    scenarioId: 's1',
    state,
    level: 'static',
    axes,
    pointCount: 6,
    pointsDone,
    pointsFailed: 0,
    createdAt: '2025-01-01T00:00:00Z',
    startedAt: null,
    finishedAt: null,
  }
}

beforeEach(() => {
  setActivePinia(createPinia())
  vi.useFakeTimers()
})
afterEach(() => {
  vi.useRealTimers()
  vi.unstubAllGlobals()
})

describe('useSweepStore', () => {
  it('follows a sweep by polling until it is done, then loads its crack-boost surface', async () => {
    const progress = [sweepAt(2, 'running'), sweepAt(6, 'done')]
    const surface = { metric: 'crackBoostPa', x: axes[1], y: axes[0], z: [[1, 2, 3], [4, 5, 6]] }
    const api = routeFetch({
      'POST /api/sweeps': () => [201, { sweep: sweepAt(0, 'queued') }],
      'GET /api/sweeps/w1': () => [200, { sweep: progress.shift() ?? sweepAt(6, 'done') }],
      'GET /api/sweeps/w1/surface': () => [200, surface],
    })
    vi.stubGlobal('fetch', api.fetchStub)
    const store = useSweepStore()

    await store.start('s1', [{ path: 'springs.0.seatForceN', range: { from: 100, to: 150, count: 2 } }])
    await vi.advanceTimersByTimeAsync(0)
    expect(store.sweep?.pointsDone).toBe(2)
    expect(store.progress).toBeCloseTo(100 / 3, 6)
    expect(store.running).toBe(true)
    expect(store.surface).toBeNull()

    await vi.advanceTimersByTimeAsync(POLL_INTERVAL_MS)
    expect(store.sweep?.state).toBe('done')
    expect(store.running).toBe(false)
    expect(store.surface?.z).toEqual([[1, 2, 3], [4, 5, 6]])

    const surfaceRequest = api.requests.find((r) => r.key === 'GET /api/sweeps/w1/surface')
    // x is the ratio (axis 1), y the seat force (axis 0), as the surface plot expects.
    expect(Object.fromEntries(surfaceRequest!.url.searchParams)).toEqual({ metric: 'crackBoostPa', x: '1', y: '0' })
    expect(api.requests.find((r) => r.key === 'POST /api/sweeps')?.body).toEqual({
      scenarioId: 's1',
      level: 'static',
      axes: [{ path: 'springs.0.seatForceN', range: { from: 100, to: 150, count: 2 } }],
    })

    // Nothing is asked after the sweep is done.
    const asked = api.requests.length
    await vi.advanceTimersByTimeAsync(POLL_INTERVAL_MS * 4)
    expect(api.requests.length).toBe(asked)
  })

  it('shows the field the API names when it refuses a sweep', async () => {
    const api = routeFetch({
      'POST /api/sweeps': () => [
        400,
        { error: { code: 'validation', message: 'The sweep is not valid.', fields: { 'axes.0.range': 'gives a seat force that must be at least 0' } } },
      ],
    })
    vi.stubGlobal('fetch', api.fetchStub)
    const store = useSweepStore()
    await store.start('s1', [{ path: 'springs.0.seatForceN', range: { from: -10, to: 150, count: 2 } }])

    expect(store.error).toBe('The sweep is not valid.')
    expect(store.fieldErrors['axes.0.range']).toBe('gives a seat force that must be at least 0')
    expect(store.sweep).toBeNull()
  })
})
