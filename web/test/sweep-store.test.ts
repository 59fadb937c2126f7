import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import type { Sweep } from '@/api/types'
import { RECONNECT_DELAY_MS, useSweepStore } from '@/stores/sweep'
import { routeFetch } from './mount-app'

const axes = [
  { path: 'springs.0.seatForceN', values: [100, 150] },
  { path: 'exhaust.ratio', values: [1, 1.5, 2] },
]

function sweepAt(pointsDone: number, state: Sweep['state']): Sweep {
  return {
    id: 'w1',
    scenarioId: 's1',
    createdBy: 'u1',
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
  it('opens the event stream again when it drops before a final state, then loads the crack-boost surface', async () => {
    const surface = { metric: 'crackBoostPa', x: axes[1], y: axes[0], z: [[1, 2, 3], [4, 5, 6]], slice: null }
    const streams = [
      'retry: 2000\nevent: state\ndata: {"state":"running","previous":null}\n\nevent: progress\ndata: {"state":"running","pointCount":6,"pointsDone":2,"pointsFailed":0,"pointsPerSecond":null,"secondsLeft":null}\n\n',
      'event: progress\ndata: {"state":"done","pointCount":6,"pointsDone":6,"pointsFailed":0,"pointsPerSecond":3,"secondsLeft":0}\n\nevent: state\ndata: {"state":"done","previous":"running"}\n\n',
    ]
    const api = routeFetch({
      'POST /api/sweeps': () => [201, { sweep: sweepAt(0, 'queued') }],
      'GET /api/sweeps/w1/surface': () => [200, surface],
    })
    let opened = 0
    vi.stubGlobal('fetch', async (input: string, init?: RequestInit) => {
      if (!String(input).endsWith('/events')) return api.fetchStub(input, init)
      opened += 1
      return new Response(streams.shift() ?? '', { status: 200, headers: { 'Content-Type': 'text/event-stream' } })
    })
    const store = useSweepStore()

    await store.start('s1', 'static', [{ path: 'springs.0.seatForceN', range: { from: 100, to: 150, count: 2 } }])
    await vi.advanceTimersByTimeAsync(0)
    expect(opened).toBe(1)
    expect(store.sweep?.pointsDone).toBe(2)
    expect(store.progress).toBeCloseTo(100 / 3, 6)
    expect(store.running).toBe(true)
    expect(store.pointsPerSecond).toBeNull()
    expect(store.surface).toBeNull()

    // The server asked for two seconds between tries.
    await vi.advanceTimersByTimeAsync(RECONNECT_DELAY_MS)
    expect(opened).toBe(1)
    await vi.advanceTimersByTimeAsync(2000 - RECONNECT_DELAY_MS)
    expect(opened).toBe(2)
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
    await vi.advanceTimersByTimeAsync(RECONNECT_DELAY_MS * 10)
    expect(api.requests.length).toBe(asked)
    expect(opened).toBe(2)
  })

  it('ends the follow with the reason when the server refuses the stream', async () => {
    const api = routeFetch({
      'POST /api/sweeps': () => [201, { sweep: sweepAt(0, 'queued') }],
      'GET /api/sweeps/w1/events': () => [404, { error: { code: 'not_found', message: 'Sweep not found.' } }],
    })
    vi.stubGlobal('fetch', api.fetchStub)
    const store = useSweepStore()
    await store.start('s1', 'static', [{ path: 'exhaust.ratio', values: [1, 2] }])
    await vi.advanceTimersByTimeAsync(0)
    expect(store.error).toBe('Sweep not found.')
    await vi.advanceTimersByTimeAsync(RECONNECT_DELAY_MS * 10)
    expect(api.requests.filter((r) => r.key === 'GET /api/sweeps/w1/events')).toHaveLength(1)
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
    await store.start('s1', 'static', [{ path: 'springs.0.seatForceN', range: { from: -10, to: 150, count: 2 } }])

    expect(store.error).toBe('The sweep is not valid.')
    expect(store.fieldErrors['axes.0.range']).toBe('gives a seat force that must be at least 0')
    expect(store.sweep).toBeNull()
  })

  it('follows the event stream with rate and time left, and loads the chosen metric and cut once done', async () => {
    const three = [...axes, { path: 'supply.regulatorSetpointPa', values: [200_000, 300_000] }]
    const queued = { ...sweepAt(0, 'queued'), axes: three, pointCount: 12, level: 'both' as const }
    let send: ((text: string) => void) | null = null
    let close: (() => void) | null = null
    const surfaceQueries: Record<string, string>[] = []
    const api = routeFetch({
      'POST /api/sweeps': () => [201, { sweep: queued }],
      'GET /api/sweeps/w1/surface': (_body, url) => {
        surfaceQueries.push(Object.fromEntries(url.searchParams))
        return [200, { metric: url.searchParams.get('metric'), x: axes[1], y: axes[0], z: [[1, 2, 3], [4, 5, 6]] }]
      },
    })
    vi.stubGlobal('fetch', async (input: string, init?: RequestInit) => {
      if (!String(input).endsWith('/events')) return api.fetchStub(input, init)
      const encoder = new TextEncoder()
      const body = new ReadableStream<Uint8Array>({
        start(controller) {
          send = (text) => controller.enqueue(encoder.encode(text))
          close = () => controller.close()
        },
      })
      return new Response(body, { status: 200, headers: { 'Content-Type': 'text/event-stream' } })
    })
    const store = useSweepStore()
    await store.start('s1', 'both', [{ path: 'exhaust.ratio', values: [1, 1.5, 2] }])
    await vi.advanceTimersByTimeAsync(0)
        expect(store.metric).toBe('crackBoostPa')

    send!('event: progress\ndata: {"state":"running","pointCount":12,"pointsDone":3,"pointsFailed":1,"pointsPerSecond":1.5,"secondsLeft":6}\n\n')
    await vi.advanceTimersByTimeAsync(0)
    expect(store.sweep?.state).toBe('running')
    expect(store.sweep?.pointsDone).toBe(3)
    expect(store.sweep?.pointsFailed).toBe(1)
    expect(store.progress).toBe(25)
    expect(store.pointsPerSecond).toBe(1.5)
    expect(store.secondsLeft).toBe(6)

    send!('event: progress\ndata: {"state":"running","pointCount":12,"pointsDone":12,"pointsFailed":1,"pointsPerSecond":2,"secondsLeft":0}\n\nevent: state\ndata: {"state":"done"}\n\n')
    close!()
    await vi.advanceTimersByTimeAsync(0)
    expect(store.sweep?.state).toBe('done')
    expect(store.running).toBe(false)
    expect(store.surface?.z).toEqual([[1, 2, 3], [4, 5, 6]])
    expect(surfaceQueries[0]).toEqual({ metric: 'crackBoostPa', x: '1', y: '0', at: '200000' })

    await store.view({ metric: 'settledBoostPa', slice: 1 })
    expect(surfaceQueries[1]).toEqual({ metric: 'settledBoostPa', x: '1', y: '0', at: '300000' })
    expect(store.surface?.metric).toBe('settledBoostPa')
    // The sweep's own progress was never polled: the stream carried it.
    expect(api.requests.some((r) => r.key === 'GET /api/sweeps/w1')).toBe(false)
  })

  it('says plainly when the month has not enough compute units left', async () => {
    const api = routeFetch({
      'POST /api/sweeps': () => [
        402,
        { error: { code: 'quota_exceeded', message: 'This sweep needs 250 compute units; 40 are left this month.' } },
      ],
    })
    vi.stubGlobal('fetch', api.fetchStub)
    const store = useSweepStore()
    await store.start('s1', 'dynamic', [{ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 250 } }])
    expect(store.errorCode).toBe('quota_exceeded')
    expect(store.error).toBe('This sweep needs 250 compute units; 40 are left this month.')
    expect(store.sweep).toBeNull()
  })

  it('asks what a sweep would cost, keeps only the newest answer, and keeps the fields an estimate refuses', async () => {
    const bodies: unknown[] = []
    const api = routeFetch({
      'POST /api/sweeps/estimate': (body) => {
        bodies.push(body)
        const axes = (body as { axes: { range?: { from: number } }[] }).axes
        if ((axes[0]?.range?.from ?? 0) < 0) {
          return [400, { error: { code: 'validation', message: 'The sweep axes are not valid.', fields: { 'axes.0.range': 'is below 0' } } }]
        }
        return [200, { estimate: { pointCount: 10, computeUnits: 10, remaining: { member: null, workspace: 500 } } }]
      },
    })
    vi.stubGlobal('fetch', api.fetchStub)
    const store = useSweepStore()
    await store.estimateCost('s1', 'dynamic', [{ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 10 } }])
    expect(bodies[0]).toEqual({ scenarioId: 's1', level: 'dynamic', axes: [{ path: 'exhaust.ratio', range: { from: 1, to: 2, count: 10 } }] })
    expect(store.estimate).toEqual({ pointCount: 10, computeUnits: 10, remaining: { member: null, workspace: 500 } })

    await store.estimateCost('s1', 'static', [{ path: 'exhaust.ratio', range: { from: -1, to: 2, count: 10 } }])
    expect(store.estimate).toBeNull()
    expect(store.estimateError).toBe('The sweep axes are not valid.')
    expect(store.estimateFields).toEqual({ 'axes.0.range': 'is below 0' })

    store.clearEstimate()
    expect(store.estimateFields).toEqual({})
    expect(store.estimateError).toBeNull()
  })
})
