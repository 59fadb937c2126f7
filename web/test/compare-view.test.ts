import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { defaultScenario, runPull, scenarioSchema, type Scenario } from '@crackpoint/sim-core'
import type { Role, ScenarioRow } from '@/api/types'
import { useCompareStore } from '@/stores/compare'
import { useSessionStore } from '@/stores/session'
import CompareView from '@/views/CompareView.vue'
import { mountApp, routeFetch } from './mount-app'

/* The browser's worker is replaced by the same sim-core pull in the test's thread, every run recorded. */
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

function row(id: string, name: string, data: Scenario): ScenarioRow {
  return { id, name, data, version: 1, ownerId: 'u1', createdAt: '2026-11-01T00:00:00Z', updatedAt: '2026-11-01T00:00:00Z' }
}
const street = row('a', 'Street car', defaultScenario())
const stiffer = row('b', 'Track car', scenarioSchema.parse({ ...defaultScenario(), springs: [{ from: 'seat', seatForceN: 258, rateNPerM: 3500 }] }))

const AXES = [
  { path: 'springs.0.seatForceN', values: [100, 200] },
  { path: 'exhaust.ratio', values: [1, 2] },
]
function sweep(id: string, scenarioId: string) {
  return { id, scenarioId, state: 'done', level: 'static', axes: AXES, pointCount: 4, pointsDone: 4, pointsFailed: 0, createdAt: '2026-11-01T00:00:00Z', startedAt: null, finishedAt: null }
}
function surface(z: (number | null)[][]) {
  return { metric: 'crackBoostPa', x: AXES[0], y: AXES[1], z }
}

async function mountCompare(role: Role) {
  vi.stubGlobal(
    'fetch',
    routeFetch({
      'GET /api/scenarios': () => [200, { items: [street, stiffer], total: 2 }],
      'GET /api/sweeps': () => [200, { items: [sweep('s1', 'a'), sweep('s2', 'b')], total: 2 }],
      'GET /api/sweeps/s1/surface': () => [200, surface([[10_000, 20_000], [30_000, null]])],
      'GET /api/sweeps/s2/surface': () => [200, surface([[16_895, 20_000], [23_105, 40_000]])],
    }).fetchStub,
  )
  const mounted = await mountApp(CompareView)
  useSessionStore().user = {
    id: 'u1',
    email: `${role}@harrowlane.example`,
    displayName: 'Shop member',
    role,
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  await flushPromises()
  return mounted
}

const cell = (wrapper: VueWrapper, testId: string) => wrapper.find(`[data-testid="${testId}"]`).text()

describe('CompareView', { timeout: 60_000 }, () => {
  it('puts two scenarios side by side with their balance and one crack line each over the ratio', async () => {
    const { wrapper } = await mountCompare('analyst')
    expect(wrapper.find('[data-testid="compare-hint"]').text()).toContain('Pick two or more scenarios')
    useCompareStore().pickedIds = ['a', 'b']
    await flushPromises()
    const table = wrapper.find('[data-testid="compare-table"]').text()
    expect(table).toContain('Street car')
    expect(table).toContain('Track car')
    expect(table).toContain('Bottom port on boost')
    expect(cell(wrapper, 'compare-crack-0')).toBe('3.9 psi')
    // Twice the seat force on the same areas: twice the crack boost (3.87 psi shown as 3.9).
    expect(cell(wrapper, 'compare-crack-1')).toBe('7.7 psi')
    await flushPromises()
    await vi.waitFor(() => expect((wrapper.find('[data-testid="compare-ratio-plot"]').element as { plotted?: unknown }).plotted).toBeDefined())
    const plotted = (wrapper.find('[data-testid="compare-ratio-plot"]').element as HTMLElement & { plotted?: { data: { name: string; x: number[] }[] } }).plotted
    expect(plotted?.data.map((trace) => trace.name)).toEqual(['Street car', 'Track car'])
    expect(plotted?.data[0]?.x[0]).toBe(1)
    expect(plotted?.data[0]?.x.at(-1)).toBe(2)
  })

  it('subtracts one sweep surface from another of the same axes, in the user units', async () => {
    const { wrapper } = await mountCompare('analyst')
    const store = useCompareStore()
    store.firstSweepId = 's1'
    store.secondSweepId = 's2'
    for (let i = 0; i < 20 && !store.difference; i++) await new Promise((resolve) => setTimeout(resolve, 10))
    await flushPromises()
    await vi.waitFor(() => expect((wrapper.find('[data-testid="difference-plot"]').element as { plotted?: unknown }).plotted).toBeDefined())
    const plotted = (wrapper.find('[data-testid="difference-plot"]').element as HTMLElement & { plotted?: { data: { z: (number | null)[][] }[] } }).plotted
    const z = plotted?.data[0]?.z ?? []
    // 6 895 Pa is 1 psi; a point either sweep lacks stays a hole.
    expect(z[0]?.[0]).toBeCloseTo(1, 3)
    expect(z[0]?.[1]).toBeCloseTo(0, 9)
    expect(z[1]?.[0]).toBeCloseTo(-1, 3)
    expect(z[1]?.[1]).toBeNull()
    expect(wrapper.find('[data-testid="sweep-difference"]').text()).toContain('Largest difference 1.00 psi')
  })

  it('tells an analyst plainly why the supply comparison is not theirs to run', async () => {
    const { wrapper } = await mountCompare('analyst')
    expect(wrapper.find('[data-testid="supply-read-only"]').text()).toContain('runs two pulls, which your role does not run')
    expect(wrapper.find('[data-testid="run-supply-comparison"]').exists()).toBe(false)
  })

  it('runs one pull on a CO₂ bottle and one on a compressor with tank at the same setpoint and shows what each gives', async () => {
    const { wrapper } = await mountCompare('builder')
    useCompareStore().pickSupplyScenario('a')
    await flushPromises()
    expect(wrapper.find('[data-testid="arrangement-note"]').text()).toContain('puts the supply on the top')
    expect((wrapper.find('[data-testid="supply-setpoint"] input').element as HTMLInputElement).value).toBe('10')

    await wrapper.find('[data-testid="bottle-fillMassKg"] input').setValue('60')
    await flushPromises()
    expect(wrapper.find('[data-testid="bottle-fillMassKg"]').element.closest('.v-input')?.textContent).toContain('must be at most')
    expect(wrapper.find('[data-testid="run-supply-comparison"]').attributes('disabled')).toBeDefined()
    await wrapper.find('[data-testid="bottle-fillMassKg"] input').setValue('5')
    await wrapper.find('[data-testid="supply-setpoint"] input').setValue('8')
    await flushPromises()

    await wrapper.find('[data-testid="run-supply-comparison"]').trigger('click')
    for (let i = 0; i < 50 && !useCompareStore().compressor; i++) await new Promise((resolve) => setTimeout(resolve, 50))
    await flushPromises()

    expect(runs.map((s) => s.supply.kind)).toEqual(['co2', 'compressor'])
    expect(runs.map((s) => s.control.kind)).toEqual(['both', 'both'])
    for (const s of runs) expect(s.supply.kind !== 'boost' && s.supply.regulatorSetpointPa).toBeCloseTo(55_158, 0) // 8 psi
    const results = wrapper.find('[data-testid="supply-results"]').text()
    expect(results).toContain('Boost held')
    expect(cell(wrapper, 'supply-held-0')).toMatch(/psi|never opened|Does not settle/)
    expect(cell(wrapper, 'supply-pulls-0')).toMatch(/per full bottle/)
    expect(cell(wrapper, 'supply-pulls-1')).toMatch(/back to back|keeps up/)
    expect(cell(wrapper, 'supply-recovery-0')).toContain('swap or refill the bottle')
    expect(cell(wrapper, 'supply-gas-0')).toMatch(/lb/)
    expect(wrapper.find('[data-testid="gas-caution"]').text()).toContain('high pressure')
  })
})
