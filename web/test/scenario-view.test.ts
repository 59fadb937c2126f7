import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { RouterView } from 'vue-router'
import { defaultScenario } from '@crackpoint/sim-core'
import type { ScenarioRow } from '@/api/types'
import { useSessionStore } from '@/stores/session'
import ScenarioView from '@/views/ScenarioView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
})

const row: ScenarioRow = {
  id: 's1',
  name: 'Demo',
  data: defaultScenario(),
  version: 3,
  ownerId: 'u1',
  createdAt: '2025-01-01T00:00:00Z',
  updatedAt: '2025-01-01T00:00:00Z',
}

async function mountView(patchAnswer: [number, unknown]) {
  const api = routeFetch({
    'GET /api/scenarios/s1': () => [200, { scenario: row }],
    'GET /api/sweeps': () => [200, { items: [], total: 0 }],
    'PATCH /api/scenarios/s1': () => patchAnswer,
  })
  vi.stubGlobal('fetch', api.fetchStub)
  localStorage.setItem('crackpoint.token', 'signed.token.value')
  const mounted = await mountApp(
    RouterView,
    [
      { path: '/scenarios', name: 'scenarios', component: { render: () => null } },
      { path: '/scenarios/:id', name: 'scenario', component: ScenarioView, props: true },
      { path: '/scenarios/:id/sheet', name: 'setup-sheet', component: { render: () => null } },
    ],
    '/scenarios/s1',
  )
  useSessionStore().user = {
    id: 'u1',
    email: 'engineer@harrowlane.example',
    displayName: 'Shop engineer',
    role: 'engineer',
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  return { ...mounted, api }
}

describe('ScenarioView', () => {
  it('saves with the version it opened and says plainly when someone else saved first', async () => {
    const { wrapper: view, api } = await mountView([409, { error: { code: 'version_conflict', message: 'The scenario has changed.' } }])
    await flushPromises()
    expect(view.find('[data-testid="crack-boost"]').text()).toBe('3.9 psi')
    expect(view.find('[data-testid="save"]').attributes('disabled')).toBeDefined()
    expect(view.find('[data-testid="open-sheet"]').attributes('href')).toBe('/scenarios/s1/sheet')

    await view.find('[data-testid="springs.0.seatForceN"] input').setValue('40')
    await flushPromises()
    expect(view.find('[data-testid="unsaved"]').exists()).toBe(true)
    await view.find('[data-testid="save"]').trigger('click')
    await flushPromises()

    const patch = api.requests.find((r) => r.key === 'PATCH /api/scenarios/s1')
    expect(patch?.headers.Authorization).toBe('Bearer signed.token.value')
    expect(patch?.body).toMatchObject({ name: 'Demo', version: 3 })
    // 40 lbf × 4.448222 N/lbf (NIST SP 811).
    expect((patch?.body as { data: { springs: { seatForceN: number }[] } }).data.springs[0]?.seatForceN).toBeCloseTo(177.929, 2)
    expect(view.find('[data-testid="save-error"]').text()).toContain('Someone saved this scenario after you opened it')
    // The edits stay in the form for the user to make again.
    expect((view.find('[data-testid="springs.0.seatForceN"] input').element as HTMLInputElement).value).toBe('40')
  })

  it('takes the saved version after a save and has nothing left unsaved', async () => {
    const saved: ScenarioRow = {
      ...row,
      version: 4,
      data: { ...row.data, springs: [{ from: 'seat', seatForceN: 177.929, rateNPerM: 3500 }] },
    }
    const { wrapper } = await mountView([200, { scenario: saved }])
    await flushPromises()
    await wrapper.find('[data-testid="springs.0.seatForceN"] input').setValue('40')
    await wrapper.find('[data-testid="save"]').trigger('click')
    await flushPromises()

    expect(wrapper.text()).toContain('Version 4')
    expect(wrapper.find('[data-testid="unsaved"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="save-error"]').exists()).toBe(false)
  })
})
