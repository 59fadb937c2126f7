import { afterEach, describe, expect, it, vi } from 'vitest'
import { defineComponent, h } from 'vue'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { VSelect } from 'vuetify/components'
import { defaultScenario, parseScenario, runPull, type Scenario } from '@crackpoint/sim-core'
import type { Sweep } from '@/api/types'
import SurfacePlot from '@/components/SurfacePlot.vue'
import SweepResults from '@/components/SweepResults.vue'
import { useSessionStore } from '@/stores/session'
import { useSweepStore } from '@/stores/sweep'
import { mountApp, routeFetch } from './mount-app'

/* The pull worker is the browser's; here the same sim-core pull runs in the test's thread behind its client. */
const runs: Scenario[] = []
vi.mock('@/workers/pull-client', () => {
  class PullCancelled extends Error {}
  return {
    PullCancelled,
    createPullClient: () => ({
      run: async (scenario: Scenario) => {
        runs.push(scenario)
        return { result: runPull(scenario), elapsedMs: 1 }
      },
      cancel: () => undefined,
    }),
  }
})

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
  runs.length = 0
})

function co2Scenario(): Scenario {
  const parsed = parseScenario({ ...defaultScenario(), control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: 68_948 } })
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues))
  return parsed.scenario
}

const sweep: Sweep = {
  id: 'w1',
  scenarioId: 's1',
  createdBy: 'u1',
  state: 'done',
  level: 'static',
  axes: [
    { path: 'springs.0.seatForceN', values: [100, 120, 140] },
    { path: 'exhaust.ratio', values: [1, 2] },
    { path: 'supply.regulatorSetpointPa', values: [55_158, 82_737] },
  ],
  pointCount: 12,
  pointsDone: 12,
  pointsFailed: 0,
  createdAt: '2026-12-01T00:00:00Z',
  startedAt: null,
  finishedAt: null,
}

type Plotted = HTMLElement & { plotted?: { data: { type: string; z: (number | null)[][]; text: string[][] }[]; layout: { xaxis?: { ticktext?: string[] } } } }

/** `snapshot` is the scenarioSnapshot GET /api/sweeps/w1 answers: the copy the sweep took, not the saved scenario. */
async function mountResults(snapshot: Scenario | null) {
  const surfaceAsked: URLSearchParams[] = []
  const api = routeFetch({
    'GET /api/sweeps/w1': () => [200, { sweep: { ...sweep, scenarioSnapshot: snapshot } }],
    'GET /api/sweeps/w1/surface': (_body, url) => {
      surfaceAsked.push(url.searchParams)
      // 68 948 Pa = 10 psi, 34 474 Pa = 5 psi; one point never opens.
      const at = Number(url.searchParams.get('at'))
      const third = sweep.axes[2]!
      const index = third.values.indexOf(at)
      return [
        200,
        {
          metric: url.searchParams.get('metric'),
          x: sweep.axes[1],
          y: sweep.axes[0],
          z: [[68_948, 34_474], [null, 68_948], [34_474, 34_474]],
          slice: { axis: 2, path: third.path, index, value: third.values[index], requested: at },
        },
      ]
    },
    'GET /api/sweeps/w1/points': () => [200, { items: [], total: 0, offset: 0, limit: 25, sort: 'index', order: 'asc' }],
  })
  vi.stubGlobal('fetch', api.fetchStub)
  const Host = defineComponent({ setup: () => () => h(SweepResults) })
  const mounted = await mountApp(Host)
  useSessionStore().setUnitSystem('us')
  const store = useSweepStore()
  store.sweep = sweep
  await store.view({ metric: 'crackBoostPa' })
  await flushPromises()
  return { ...mounted, surfaceAsked, store, api }
}

describe('SweepResults', () => {
  it("draws the metric as a heat map in the user's units, with the sweep's values as ticks and gaps named", async () => {
    const { wrapper } = await mountResults(co2Scenario())
    const plot = wrapper.find('[data-testid="heat-map-plot"]').element as Plotted
    const trace = plot.plotted?.data[0]
    expect(trace?.type).toBe('heatmap')
    expect(trace?.z[0]).toEqual([10, 5].map((v) => expect.closeTo(v, 3)))
    expect(trace?.text[1]).toEqual(['no value', '10.0 psi'])
    expect(plot.plotted?.layout.xaxis?.ticktext).toEqual(['1', '2'])
    expect(wrapper.text()).toContain('Gaps are points with no value for this metric')
    // A static sweep offers the static level's metrics only.
    const items = wrapper.findComponent(VSelect).props('items') as { title: string }[]
    expect(items.map((i) => i.title)).toEqual(['Crack boost', 'Full-open boost'])
  })

  it('draws a dashed line where the metric crosses a target boost typed in, in the units on screen', async () => {
    const { wrapper } = await mountResults(co2Scenario())
    await wrapper.find('[data-testid="sweep-target-line"] input').setValue('7.5')
    await new Promise((resolve) => setTimeout(resolve, 0))
    await flushPromises()
    const plot = wrapper.find('[data-testid="heat-map-plot"]').element as Plotted
    const traces = (plot.plotted?.data ?? []) as unknown as { type: string; name?: string; contours?: { start: number; end: number } }[]
    const line = traces.find((t) => t.type === 'contour')
    expect(line?.contours).toMatchObject({ start: expect.closeTo(7.5, 6), end: expect.closeTo(7.5, 6) })
    expect(line?.name).toBe('Target 7.5 psi')
  })

  it('cuts the third axis with the slider and opens the clicked cell of that cut as a pull', async () => {
    const { wrapper, surfaceAsked, store } = await mountResults(co2Scenario())
    expect(wrapper.find('[data-testid="sweep-slice"]').text()).toContain('Cut at Regulator setpoint: 8.0 psi')
    expect(surfaceAsked[0]?.get('at')).toBe('55158')

    // Seat force index 2 (140 N), ratio index 1 (2.0), setpoint index 0: point 2·4 + 1·2 + 0 = 10.
    wrapper.findComponent(SurfacePlot).vm.$emit('pick', 1, 2)
    await flushPromises()
    expect(runs).toHaveLength(1)
    expect(runs[0]?.springs[0]).toMatchObject({ seatForceN: 140 })
    expect(runs[0]?.exhaust.ratio).toBe(2)
    expect(runs[0]?.supply).toMatchObject({ regulatorSetpointPa: 55_158 })
    expect(wrapper.find('[data-testid="point-pull"]').text()).toContain('Point 11: its pull')
    expect(wrapper.find('[data-testid="point-pull-where"]').text()).toBe('Spring seat force 31.5 lbf · Drive-to-boost ratio 2.00 · Regulator setpoint 8.0 psi')

    await store.view({ slice: 1 })
    await flushPromises()
    expect(surfaceAsked.at(-1)?.get('at')).toBe('82737')
    expect(wrapper.find('[data-testid="sweep-slice"]').text()).toContain('Cut at Regulator setpoint: 12.0 psi')
    wrapper.findComponent(SurfacePlot).vm.$emit('pick', 0, 0)
    await flushPromises()
    expect(runs[1]?.supply).toMatchObject({ regulatorSetpointPa: 82_737 })
    expect(wrapper.find('[data-testid="point-pull"]').text()).toContain('Point 2: its pull')
    expect(wrapper.find('[data-testid="point-pull-metrics"]').text()).toContain('Settled boost')
  })

  it("opens points from the sweep's own snapshot, asked for once per sweep", async () => {
    const { wrapper, api } = await mountResults(co2Scenario())
    expect(wrapper.find('[data-testid="sweep-pick-hint"]').text()).toBe("Click a cell to open that point's pull.")
    wrapper.findComponent(SurfacePlot).vm.$emit('pick', 0, 0)
    await flushPromises()
    wrapper.findComponent(SurfacePlot).vm.$emit('pick', 1, 1)
    await flushPromises()
    expect(runs).toHaveLength(2)
    // The snapshot's CO2 supply, which the default scenario lacks, is what the points ran.
    expect(runs.map((r) => r.supply.kind)).toEqual(['co2', 'co2'])
    expect(api.requests.filter((r) => r.key === 'GET /api/sweeps/w1')).toHaveLength(1)
  })

  it('says why no point opens when the model no longer accepts the snapshot', async () => {
    const { wrapper } = await mountResults(null)
    wrapper.findComponent(SurfacePlot).vm.$emit('pick', 0, 0)
    await flushPromises()
    expect(runs).toHaveLength(0)
    expect(wrapper.find('[data-testid="point-pull-error"]').text()).toContain('no longer accepted')
  })
})
