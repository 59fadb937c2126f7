import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { RouterView } from 'vue-router'
import type { LibraryRow } from '@/api/library'
import type { Role } from '@/api/types'
import AppShell from '@/components/AppShell.vue'
import { useSessionStore } from '@/stores/session'
import LibraryView from '@/views/LibraryView.vue'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  localStorage.clear()
  document.body.innerHTML = ''
})

function part(id: string, name: string, data: Record<string, unknown>): LibraryRow {
  return {
    id,
    name,
    notes: '',
    data,
    version: 2,
    archived: false,
    archivedAt: null,
    createdBy: null,
    updatedBy: null,
    createdAt: '2026-11-01T00:00:00Z',
    updatedAt: '2026-11-02T00:00:00Z',
  }
}

/** A gate with a 2 in actuator and a 0.4 in shaft: bottom chamber π/4·(2² − 0.4²) in² = 3.016 in². */
const gate = part('g1', 'Shop 44 mm gate', {
  count: 1,
  valveDiameterM: 0.044,
  shaftDiameterM: 0.01016,
  actuatorDiameterM: 0.0508,
  actuatorKind: 'diaphragm',
  maxLiftM: 0.0127,
})
const red = part('s1', 'Red 7 psi', { from: 'seat', seatForceN: 100, rateNPerM: 3000 })
const blue = part('s2', 'Blue bench', { from: 'bench', benchCrackPressurePa: 34_474, rateNPerM: 1000 })

type Handlers = Parameters<typeof routeFetch>[0]

async function mountLibrary(kind: string, role: Role, extra: Handlers = {}) {
  const api = routeFetch({
    'GET /api/library/wastegates': () => [200, { items: [gate], total: 1 }],
    'GET /api/library/springs': () => [200, { items: [red, blue], total: 2 }],
    ...extra,
  })
  vi.stubGlobal('fetch', api.fetchStub)
  const mounted = await mountApp(
    RouterView,
    [
      {
        path: '/',
        component: AppShell,
        children: [
          { path: 'library/:kind', name: 'library', component: LibraryView, props: true },
          { path: 'scenarios', name: 'scenarios', component: { render: () => null } },
        ],
      },
      { path: '/sign-in', name: 'sign-in', component: { render: () => null } },
    ],
    `/library/${kind}`,
  )
  useSessionStore().user = {
    id: 'u1',
    email: `${role}@harrowlane.example`,
    displayName: 'Shop member',
    role,
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  await flushPromises()
  return { ...mounted, api }
}

const dialog = () => document.querySelector('[data-testid="library-form"]') as HTMLElement | null
const fieldInput = (testId: string) => document.querySelector(`[data-testid="${testId}"] input`) as HTMLInputElement
const messagesOf = (testId: string) =>
  document.querySelector(`[data-testid="${testId}"]`)?.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''

async function type(testId: string, text: string): Promise<void> {
  const input = fieldInput(testId)
  input.value = text
  input.dispatchEvent(new Event('input'))
  await flushPromises()
}

async function click(element: Element | null | undefined): Promise<void> {
  if (!element) throw new Error('nothing to click')
  ;(element as HTMLElement).click()
  await flushPromises()
}

const button = (text: string) => [...document.querySelectorAll('button')].find((b) => b.textContent?.trim() === text)

// Each test mounts the whole shell and table; on a loaded machine that can take several seconds.
describe('LibraryView', { timeout: 20_000 }, () => {
  it('lists the parts in the user units, asks the API to sort and search, and follows the unit switch', async () => {
    const { wrapper, api } = await mountLibrary('springs', 'engineer')
    const table = () => wrapper.find('[data-testid="library-table"]').text()
    expect(table()).toContain('Red 7 psi')
    expect(table()).toContain('22.5 lbf')
    expect(table()).toContain('5.0 psi')

    await click(wrapper.find('[data-testid="unit-switch"] button:last-child').element)
    expect(table()).toContain('100 N')
    expect(table()).toContain('34.5 kPa')

    const rateHeader = [...wrapper.element.querySelectorAll('th')].find((th) => th.textContent?.includes('Rate'))
    await click(rateHeader?.querySelector('.v-data-table-header__content') ?? rateHeader)
    const sorted = api.requests.filter((r) => r.key === 'GET /api/library/springs').at(-1)
    expect(sorted?.url.searchParams.get('sort')).toBe('rateNPerM')
    expect(sorted?.url.searchParams.get('offset')).toBe('0')

    vi.useFakeTimers()
    await wrapper.find('[data-testid="library-search"] input').setValue('red')
    vi.advanceTimersByTime(400)
    vi.useRealTimers()
    await flushPromises()
    const searched = api.requests.filter((r) => r.key === 'GET /api/library/springs').at(-1)
    expect(searched?.url.searchParams.get('q')).toBe('red')
  })

  it('turns a bench crack pressure into a seat force on a library gate, in either unit system', async () => {
    let posted: unknown
    const { wrapper } = await mountLibrary('springs', 'engineer', {
      'POST /api/library/springs': (body) => {
        posted = body
        return [201, { item: part('s3', 'Green', (body as { data: Record<string, unknown> }).data) }]
      },
    })
    await wrapper.find('[data-testid="new-part"]').trigger('click')
    await flushPromises()
    expect(dialog()?.textContent).toContain('Seat force')

    const bench = [...document.querySelectorAll('[data-testid="part-shape"] input')].find((i) => (i as HTMLInputElement).value === 'bench')
    await click(bench)
    expect(fieldInput('part-benchCrackPressurePa')).toBeTruthy()

    await type('part-benchCrackPressurePa', '0')
    expect(messagesOf('part-benchCrackPressurePa')).toContain('Must be greater than 0.0 psi')
    expect((button('Save') as HTMLButtonElement).disabled).toBe(true)

    await type('part-benchCrackPressurePa', '10')
    // 10 psi on 3.016 in² lifts 30.2 lbf (MODEL.md §1, F0 = p_bench·(A_p − A_s)).
    const result = () => document.querySelector('[data-testid="bench-result"]')?.textContent ?? ''
    expect(result()).toContain('10.0 psi')
    expect(result()).toContain('30.2 lbf')

    await click(wrapper.find('[data-testid="unit-switch"] button:last-child').element)
    expect(fieldInput('part-benchCrackPressurePa').value).toBe('68.95')
    expect(result()).toContain('134 N')

    await type('part-name', 'Green')
    await click(button('Save'))
    expect(posted).toEqual({ name: 'Green', notes: '', data: { from: 'bench', benchCrackPressurePa: expect.closeTo(68_947.6, 0) as number, rateNPerM: 3500 } })
    expect(dialog()).toBeNull()
  })

  it('shows the API field error beside the field it names', async () => {
    const { wrapper } = await mountLibrary('springs', 'engineer', {
      'POST /api/library/springs': () => [
        409,
        { error: { code: 'name_taken', message: 'Another spring in the library already has this name.', fields: { name: 'is already the name of another spring' } } },
      ],
    })
    await wrapper.find('[data-testid="new-part"]').trigger('click')
    await flushPromises()
    await type('part-name', 'Red 7 psi')
    await click(button('Save'))
    expect(messagesOf('part-name')).toContain('Is already the name of another spring')
  })

  it('redraws the wastegate picture as a diameter changes', async () => {
    const { wrapper } = await mountLibrary('wastegates', 'engineer')
    await click(wrapper.find('.part-name').element)
    const face = () => document.querySelector('[data-testid="area-face"]')?.textContent ?? ''
    expect(face()).toContain('Ø 1.732 in')
    await type('part-valveDiameterM', '2')
    expect(face()).toMatch(/Ø 2(\.0+)? in/)
    expect(face()).toContain('3.14')
    await type('part-valveDiameterM', '0.3')
    expect(messagesOf('part-valveDiameterM')).toContain('Must be larger than the shaft diameter')
  })

  it('says plainly which scenarios still use a part it cannot delete, and offers to archive it', async () => {
    let archived: unknown
    const { wrapper } = await mountLibrary('springs', 'engineer', {
      'DELETE /api/library/springs/s1': () => [
        409,
        { error: { code: 'in_use', message: 'This spring is used by the scenario "Street car". Archive it instead, or build those scenarios from another spring first.' } },
      ],
      'PATCH /api/library/springs/s1': (body) => {
        archived = body
        return [200, { item: { ...red, archived: true } }]
      },
    })
    await wrapper.find('[data-testid="delete-Red 7 psi"]').trigger('click')
    await flushPromises()
    await click(document.querySelector('[data-testid="confirm-delete"]'))
    const alert = wrapper.find('[data-testid="action-error"]').text()
    expect(alert).toContain('Red 7 psi is still in use')
    expect(alert).toContain('"Street car"')
    await wrapper.find('[data-testid="archive-instead"]').trigger('click')
    await flushPromises()
    expect(archived).toEqual({ archived: true, version: 2 })
  })

  it('adds nested springs picked in the table', async () => {
    const { wrapper } = await mountLibrary('springs', 'engineer')
    const boxes = wrapper.findAll('tbody input[type="checkbox"]')
    await click(boxes[0]?.element)
    await click(boxes[1]?.element)
    // 100 N + 34 474 Pa × 0.001946 m² (67.1 N) = 167.1 N = 37.6 lbf; 3000 + 1000 N/m = 22.8 lbf/in.
    expect(wrapper.find('[data-testid="nested-totals"]').text()).toContain('37.6 lbf')
    expect(wrapper.find('[data-testid="nested-totals"]').text()).toContain('22.8 lbf/in')
  })

  it('lets a builder read the parts but not change them, and says why', async () => {
    const { wrapper } = await mountLibrary('springs', 'builder')
    expect(wrapper.find('[data-testid="new-part"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="read-only-reason"]').text()).toContain('engineers and admins add and change parts')
    expect(wrapper.find('[data-testid="delete-Red 7 psi"]').exists()).toBe(false)
    await wrapper.find('.part-name').trigger('click')
    await flushPromises()
    expect(fieldInput('part-seatForceN').readOnly).toBe(true)
    expect(button('Save')).toBeUndefined()
    expect(button('Close')).toBeTruthy()
  })
})
