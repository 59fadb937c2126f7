import { afterEach, describe, expect, it, vi } from 'vitest'
import { defineComponent, h } from 'vue'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { VSelect } from 'vuetify/components'
import type { Quotas, Usage } from '@/api/usage'
import { useSessionStore } from '@/stores/session'
import UsageView from '@/views/UsageView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
})

const ADMIN = 'a0000000-0000-4000-8000-000000000001'
const BUILDER = 'a0000000-0000-4000-8000-000000000002'

function usage(builderQuota: number | null): Usage {
  return {
    month: '2026-12',
    months: ['2026-12', '2026-11'],
    own: { userId: ADMIN, quota: null, spent: 12, reserved: 0, remaining: 7958 },
    workspace: { quota: 8000, quotaIsDefault: false, purchased: 0, granted: 0, spent: 30, reserved: 12, remaining: 7958 },
    members: [
      { userId: ADMIN, displayName: 'Shop admin', email: 'admin@harrowlane.example', role: 'admin', quota: null, granted: 0, spent: 12, reserved: 0, remaining: null },
      {
        userId: BUILDER,
        displayName: 'Shop builder',
        email: 'builder@harrowlane.example',
        role: 'builder',
        quota: builderQuota,
        granted: 0,
        spent: 18,
        reserved: 12,
        remaining: builderQuota === null ? null : builderQuota - 30,
      },
    ],
  }
}

function quotas(builderQuota: number | null): Quotas {
  return {
    workspace: { monthlyComputeUnits: 8000, isDefault: false, updatedAt: '2026-12-01T08:00:00.000Z' },
    members: [
      { userId: ADMIN, displayName: 'Shop admin', email: 'admin@harrowlane.example', role: 'admin', monthlyComputeUnits: null },
      { userId: BUILDER, displayName: 'Shop builder', email: 'builder@harrowlane.example', role: 'builder', monthlyComputeUnits: builderQuota },
    ],
  }
}

function signInAs(role: 'admin' | 'analyst') {
  useSessionStore().user = {
    id: ADMIN,
    email: `${role}@harrowlane.example`,
    displayName: `Shop ${role}`,
    role,
    unitSystem: 'metric',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
}

/** The page as the router shows it: the profile is loaded before the view mounts. */
function pageAs(role: 'admin' | 'analyst') {
  return defineComponent({
    setup() {
      signInAs(role)
      return () => h(UsageView)
    },
  })
}

const field = (wrapper: VueWrapper, testId: string) => wrapper.find(`[data-testid="${testId}"] input`)
const messageUnder = (wrapper: VueWrapper, testId: string) =>
  wrapper.find(`[data-testid="${testId}"]`).element.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''

describe('UsageView', () => {
  it("shows an admin the workspace's units left, each member's usage and a chart of it", async () => {
    const { fetchStub } = routeFetch({
      'GET /api/usage': () => [200, { usage: usage(null) }],
      'GET /api/quotas': () => [200, { quotas: quotas(null) }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'))
    await flushPromises()

    expect(wrapper.find('[data-testid="workspace-usage"]').text()).toContain('units left of')
    expect(wrapper.find('[data-testid="workspace-remaining"]').text().replace(/\D/g, '')).toBe('7958')
    const table = wrapper.find('[data-testid="member-usage"]').text()
    expect(table).toContain('Shop builder')
    expect(table).toContain('Builder · builder@harrowlane.example')
    expect((field(wrapper, 'workspace-quota-field').element as HTMLInputElement).value).toBe('8000')
    const chart = wrapper.find('[data-testid="usage-chart"]').element as HTMLElement & { plotted?: { data: { x: number[] }[] } }
    await flushPromises()
    expect(chart.plotted?.data[0]?.x).toEqual([12, 18])
    expect(chart.plotted?.data[1]?.x).toEqual([0, 12])
  })

  it("saves a member's own limit and shows the saved value", async () => {
    let builderQuota: number | null = null
    const { fetchStub, requests } = routeFetch({
      'GET /api/usage': () => [200, { usage: usage(builderQuota) }],
      'GET /api/quotas': () => [200, { quotas: quotas(builderQuota) }],
      [`PUT /api/quotas/members/${BUILDER}`]: (body) => {
        builderQuota = (body as { monthlyComputeUnits: number | null }).monthlyComputeUnits
        return [200, { quotas: quotas(builderQuota) }]
      },
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'))
    await flushPromises()

    await field(wrapper, `member-quota-field-${BUILDER}`).setValue('1,500')
    await wrapper.find(`[data-testid="member-quota-save-${BUILDER}"]`).trigger('click')
    await flushPromises()

    expect(requests.filter((r) => r.key.startsWith('PUT')).map((r) => r.body)).toEqual([{ monthlyComputeUnits: 1500 }])
    expect(wrapper.find('[data-testid="quota-saved"]').text()).toContain('Limit for Shop builder saved.')
    expect((field(wrapper, `member-quota-field-${BUILDER}`).element as HTMLInputElement).value).toBe('1500')
    expect(wrapper.find(`[data-testid="member-row-${BUILDER}"]`).text()).toContain('1,470')
  })

  it('says beside the field what is wrong with a quota, before sending or as the API answers', async () => {
    const { fetchStub, requests } = routeFetch({
      'GET /api/usage': () => [200, { usage: usage(null) }],
      'GET /api/quotas': () => [200, { quotas: quotas(null) }],
      'PUT /api/quotas/workspace': () => [400, { error: { code: 'validation_failed', message: 'Some fields are not valid.', fields: { monthlyComputeUnits: 'must be at most 1,000,000,000' } } }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'))
    await flushPromises()

    await field(wrapper, 'workspace-quota-field').setValue('12.5')
    await wrapper.find('[data-testid="workspace-quota-save"]').trigger('click')
    await flushPromises()
    expect(messageUnder(wrapper, 'workspace-quota-field')).toContain('whole number')
    expect(requests.filter((r) => r.key.startsWith('PUT'))).toHaveLength(0)

    await field(wrapper, 'workspace-quota-field').setValue('5000000000')
    await wrapper.find('[data-testid="workspace-quota-save"]').trigger('click')
    await flushPromises()
    expect(messageUnder(wrapper, 'workspace-quota-field')).toContain('must be at most 1,000,000,000')
  })

  it('shows a member who is not an admin their own usage only', async () => {
    const own: Usage = { ...usage(null), own: { userId: ADMIN, quota: 200, spent: 40, reserved: 10, remaining: 150 }, workspace: null, members: null }
    const { fetchStub, requests } = routeFetch({ 'GET /api/usage': () => [200, { usage: own }] })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('analyst'))
    await flushPromises()

    expect(wrapper.find('[data-testid="own-usage"]').text()).toContain('200 units a month')
    expect(wrapper.find('[data-testid="own-remaining"]').text()).toBe('150')
    expect(wrapper.find('[data-testid="workspace-usage"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="quota-editor"]').exists()).toBe(false)
    expect(requests.map((r) => r.key)).toEqual(['GET /api/usage'])
  })

  it('reads another month when one is picked', async () => {
    const { fetchStub, requests } = routeFetch({
      'GET /api/usage': (_body, url) => {
        const month = url.searchParams.get('month') ?? '2026-12'
        const past = month === '2026-11'
        return [200, { usage: { ...usage(null), month, workspace: { ...usage(null).workspace, spent: past ? 640 : 30 } } }]
      },
      'GET /api/quotas': () => [200, { quotas: quotas(null) }],
    })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('admin'))
    await flushPromises()
    expect(wrapper.find('[data-testid="workspace-usage"]').text()).toContain('December 2026')

    wrapper.findComponent(VSelect).vm.$emit('update:modelValue', '2026-11')
    await flushPromises()
    expect(requests.filter((r) => r.key === 'GET /api/usage').map((r) => r.url.searchParams.get('month'))).toEqual([null, '2026-11'])
    const card = wrapper.find('[data-testid="workspace-usage"]').text()
    expect(card).toContain('November 2026')
    expect(card).toContain('640')
  })

  it('says so when usage cannot be loaded', async () => {
    const { fetchStub } = routeFetch({ 'GET /api/usage': () => [500, { error: { code: 'internal', message: 'Something went wrong on the server.' } }] })
    vi.stubGlobal('fetch', fetchStub)
    const { wrapper } = await mountApp(pageAs('analyst'))
    await flushPromises()
    expect(wrapper.text()).toContain('Something went wrong on the server.')
  })
})
