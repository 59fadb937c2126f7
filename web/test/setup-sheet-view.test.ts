import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { RouterView } from 'vue-router'
import { defaultScenario, scenarioSchema } from '@crackpoint/sim-core'
import type { ScenarioRow } from '@/api/types'
import { useSessionStore } from '@/stores/session'
import SetupSheetView from '@/views/SetupSheetView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

/** Twin gates, both ports used: boost on the bottom, a CO₂ bottle at 10 psi on the top. */
const row: ScenarioRow = {
  id: 's9',
  name: 'Twin gates, CO₂ on the top',
  data: scenarioSchema.parse({
    ...defaultScenario(),
    wastegate: { ...defaultScenario().wastegate, count: 2 },
    control: { kind: 'both' },
    supply: { kind: 'co2', regulatorSetpointPa: 68_948 },
  }),
  version: 4,
  ownerId: 'u1',
  createdAt: '2025-01-01T00:00:00Z',
  updatedAt: '2025-03-02T10:00:00Z',
}

async function mountSheet(answer: [number, unknown] = [200, { scenario: row }]) {
  vi.stubGlobal('fetch', routeFetch({ 'GET /api/scenarios/s9': () => answer }).fetchStub)
  const mounted = await mountApp(
    RouterView,
    [
      { path: '/scenarios/:id', name: 'scenario', component: { render: () => null } },
      { path: '/scenarios/:id/sheet', name: 'setup-sheet', component: SetupSheetView, props: true },
    ],
    '/scenarios/s9/sheet',
  )
  useSessionStore().user = {
    id: 'u1',
    email: 'builder@harrowlane.example',
    displayName: 'Shop builder',
    role: 'builder',
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  await flushPromises()
  return mounted
}

/*
 * Both ports, 10 psi on the top (MODEL.md §3): b = (F0 + s·A_p) / (r·A_v + (A_p − A_s))
 * = (129 N + 68 948 Pa · 2416.9 mm²) / 0.0048508 m² = (129 + 166.64) N / 0.0048508 m² = 60 947 Pa = 8.84 psi.
 */
describe('SetupSheetView', () => {
  it('shows the shop, the hardware, the prediction and the cautions of the saved scenario', async () => {
    const { wrapper } = await mountSheet()
    const sheet = wrapper.find('[data-testid="setup-sheet"]')
    expect(wrapper.find('[data-testid="sheet-shop"]').text()).toBe('Harrow Lane Boostworks')
    expect(sheet.find('h1').text()).toBe('Twin gates, CO₂ on the top')
    expect(sheet.text()).toContain('Scenario version 4')
    expect(sheet.text()).toContain('Wastegates2, identical')
    expect(sheet.text()).toContain('Top portthe CO₂ bottle through its regulator')
    expect(sheet.text()).toContain('CO₂ bottle and regulator')
    expect(sheet.text()).toContain('Regulator setpoint10.0 psi')
    expect(wrapper.find('[data-testid="sheet-crack"]').text()).toBe('8.8 psi')

    const rows = wrapper.findAll('[data-testid="sheet-ratio-table"] tbody tr')
    expect(rows.map((r) => r.find('th').text())).toEqual(
      ['1.0', '1.1', '1.2', '1.3', '1.4', '1.5', '1.6', '1.7', '1.8', '1.9', '2.0'].map((r) => `${r} : 1`),
    )
    expect(rows[5]?.classes()).toContain('own')
    expect(rows[5]?.text()).toContain('8.8 psi')

    const cautions = wrapper.find('[data-testid="sheet-cautions"]').text()
    expect(cautions).toContain('holds gas at high pressure')
    expect(wrapper.find('[data-testid="sheet-note"]').text()).toContain('predictions from a force balance, not guarantees')
    expect(wrapper.find('[data-testid="sheet-note"]').text()).toContain("local codes and your sanctioning body's rules come first")
  })

  it('says what boost the scenario was set up for, and what its settings give at each end of the band', async () => {
    const withGoal: ScenarioRow = {
      ...row,
      data: scenarioSchema.parse({
        ...row.data,
        goal: { targetBoostPa: 60_947, target: 'crack', unknown: 'setpoint', ratioLow: 1.4, ratioHigh: 1.8 },
      }),
    }
    const { wrapper } = await mountSheet([200, { scenario: withGoal }])
    const text = wrapper.find('[data-testid="setup-sheet"]').text()
    expect(text).toContain('Boost wanted')
    expect(text).toContain('Set up for8.8 psi of crack boost, over 1.40–1.80 : 1')
    expect(text).toContain('Chosen by solving forthe regulator setpoint')
    // The crack rises as the ratio falls: the low end of the band gives the higher boost.
    expect(text).toMatch(/Those settings give(\d+\.\d) psi to (\d+\.\d) psi/)
    const [, low, high] = /Those settings give(\d+\.\d) psi to (\d+\.\d) psi/.exec(text)!
    expect(Number(low)).toBeGreaterThan(Number(high))
    // Without a goal the section is not there.
    expect((await mountSheet()).wrapper.text()).not.toContain('Set up for')
  })

  it('follows its own unit switch', async () => {
    const { wrapper } = await mountSheet()
    await wrapper.findAll('.sheet-toolbar button').find((b) => b.text() === 'Metric')!.trigger('click')
    await flushPromises()
    // 60 947 Pa = 60.9 kPa.
    expect(wrapper.find('[data-testid="sheet-crack"]').text()).toBe('60.9 kPa')
    expect(wrapper.find('[data-testid="setup-sheet"]').text()).toContain('Regulator setpoint68.9 kPa')
  })

  it('says so plainly when the scenario is not in the workspace', async () => {
    const { wrapper } = await mountSheet([404, { error: { code: 'not_found', message: 'Not found.' } }])
    expect(wrapper.text()).toContain('This scenario does not exist in your workspace.')
    expect(wrapper.find('[data-testid="setup-sheet"]').exists()).toBe(false)
  })
})
