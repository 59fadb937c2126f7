import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { defaultScenario, formatQuantity, parseScenario, runPull, solveForTarget, type Scenario, type SolveRequest } from '@crackpoint/sim-core'
import { useScenarioStore } from '@/stores/scenario'
import { mountEditor } from './mount-editor'

// The worker is the browser's; here sim-core runs in the test's own thread behind the same client interface.
vi.mock('@/workers/pull-client', () => {
  class PullCancelled extends Error {}
  return {
    PullCancelled,
    createPullClient: () => ({
      run: async (scenario: Scenario) => ({ result: runPull(scenario), elapsedMs: 1 }),
      solve: async (scenario: Scenario, request: SolveRequest) => ({ solved: solveForTarget(scenario, request), elapsedMs: 1 }),
      cancel: () => undefined,
    }),
  }
})

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

const psi = (v: number) => v * 6894.757
const settle = async () => {
  await new Promise((resolve) => setTimeout(resolve, 0))
  await flushPromises()
}
const text = (w: VueWrapper, id: string) => w.find(`[data-testid="${id}"]`).text()
async function fill(w: VueWrapper, id: string, value: string) {
  await w.find(`[data-testid="${id}"] input`).setValue(value)
  await settle()
}

function scenario(patch: Record<string, unknown>): Scenario {
  const parsed = parseScenario({ ...defaultScenario(), ...patch })
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues))
  return parsed.scenario
}

describe('boost wanted: the target solve on the scenario page', () => {
  it('gives the seat force for a crack boost as the form changes, and puts it in the scenario on request', async () => {
    const { wrapper } = await mountEditor(defaultScenario(), { withTarget: true })
    await fill(wrapper, 'target-boost', '12')
    await fill(wrapper, 'target-ratio-low', '1.5')
    await fill(wrapper, 'target-ratio-high', '1.5')
    const expected = solveForTarget(defaultScenario(), { unknown: 'seat-force', target: 'crack', targetBoostPa: psi(12), ratioBand: [1.5, 1.5] })
    if (expected.status !== 'solved') throw new Error('the default scenario should solve')
    expect(text(wrapper, 'target-value')).toContain(`Spring seat force: ${formatQuantity('force', 'us', expected.value)}`)
    expect(text(wrapper, 'target-value')).toMatch(/a bench crack of [\d.]+ psi in this gate/)
    await wrapper.find('[data-testid="target-apply"]').trigger('click')
    await settle()
    const store = useScenarioStore()
    // The scenario records what it was set up for (the setup sheet says it).
    expect(store.draft?.goal).toMatchObject({ unknown: 'seat-force', target: 'crack', ratioLow: 1.5, ratioHigh: 1.5 })
    const live = store.live
    if (!live?.ok) throw new Error('the draft should stay valid')
    expect(live.balance.crack.status).toBe('opens')
    expect(Math.abs((live.balance.crack as { boostPa: number }).boostPa - psi(12))).toBeLessThan(0.01)
  })

  it('gives a setpoint over a ratio band, each end of it, and says when a target is out of reach', async () => {
    const co2 = scenario({ control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: psi(10) } })
    const { wrapper } = await mountEditor(co2, { withTarget: true })
    await fill(wrapper, 'target-boost', '20')
    expect(text(wrapper, 'target-value')).toMatch(/^Regulator setpoint: [\d.]+ psi/)
    const rows = wrapper.findAll('[data-testid="target-band"] tbody tr').map((r) => r.text())
    expect(rows).toHaveLength(2)
    expect(rows[0]).toMatch(/^1\.40 : 1.*\+/)
    expect(rows[1]).toMatch(/^1\.80 : 1.*−/)
    await fill(wrapper, 'target-boost', '2')
    expect(text(wrapper, 'target-unreachable')).toMatch(/below what the spring alone holds\. Nearest: 0\.0 psi/)
    expect(wrapper.find('[data-testid="target-apply"]').exists()).toBe(false)
  })

  it('runs pulls for a settled-boost target on request, and keeps the answer only while it fits the form', async () => {
    const { wrapper } = await mountEditor(defaultScenario(), { withTarget: true })
    await fill(wrapper, 'target-boost', '6')
    await fill(wrapper, 'target-ratio-low', '1.5')
    await fill(wrapper, 'target-ratio-high', '1.5')
    const select = wrapper.findComponent({ name: 'VSelect' })
    await select.setValue('settled')
    await settle()
    expect(wrapper.find('[data-testid="target-answer"]').exists()).toBe(false)
    await wrapper.find('[data-testid="target-solve-pulls"]').trigger('click')
    await settle()
    expect(text(wrapper, 'target-value')).toMatch(/^Spring seat force: [\d.]+ lbf/)
    expect(wrapper.text()).toMatch(/\d+ pulls, [\d.]+ s/)
    // Another target is another question: the pulled answer is not shown for it.
    await fill(wrapper, 'target-boost', '7')
    expect(wrapper.find('[data-testid="target-answer"]').exists()).toBe(false)
  })
})
