import { afterEach, describe, expect, it, vi } from 'vitest'
import { defineComponent, h } from 'vue'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { VSelect } from 'vuetify/components'
import type { Sweep, SweepPointRow } from '@/api/types'
import { filenameFrom } from '@/api/download'
import SweepPointsTable from '@/components/SweepPointsTable.vue'
import { useSessionStore } from '@/stores/session'
import { useSweepStore } from '@/stores/sweep'
import { mountApp, routeFetch } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => {
  vi.unstubAllGlobals()
  vi.restoreAllMocks()
  localStorage.clear()
})

const sweep: Sweep = {
  id: 'w1',
  scenarioId: 's1',
  createdBy: 'u1',
  state: 'done',
  level: 'static',
  axes: [
    { path: 'springs.0.seatForceN', values: [100, 150] },
    { path: 'exhaust.ratio', values: [1, 2] },
  ],
  pointCount: 4,
  pointsDone: 4,
  pointsFailed: 0,
  createdAt: '2026-12-01T00:00:00Z',
  startedAt: null,
  finishedAt: null,
}

function row(index: number, seat: number, ratio: number, crack: number | null): SweepPointRow {
  return {
    index,
    coordinates: { 'springs.0.seatForceN': seat, 'exhaust.ratio': ratio },
    status: crack === null ? 'never-opens' : 'ok',
    dynamicStatus: null,
    error: null,
    metrics: { crackBoostPa: crack, fullOpenBoostPa: crack === null ? null : crack + 20_000 },
  }
}

async function mountTable(points: SweepPointRow[]) {
  const asked: URLSearchParams[] = []
  const api = routeFetch({
    'GET /api/sweeps/w1/points': (_body, url) => {
      asked.push(url.searchParams)
      const sort = url.searchParams.get('sort')
      const ordered = sort === 'crackBoostPa' ? [...points].sort((a, b) => Number(a.metrics.crackBoostPa ?? 0) - Number(b.metrics.crackBoostPa ?? 0)) : points
      if (url.searchParams.get('order') === 'desc') ordered.reverse()
      const wanted = url.searchParams.get('status')?.split(',')
      const kept = wanted ? ordered.filter((p) => wanted.includes(p.status)) : ordered
      const offset = Number(url.searchParams.get('offset'))
      const limit = Number(url.searchParams.get('limit'))
      return [200, { items: kept.slice(offset, offset + limit), total: kept.length, offset, limit, sort, order: url.searchParams.get('order') }]
    },
  })
  vi.stubGlobal('fetch', api.fetchStub)
  const opened: number[] = []
  const Host = defineComponent({ setup: () => () => h(SweepPointsTable, { onOpen: (i: number) => opened.push(i) }) })
  const mounted = await mountApp(Host, [], '/')
  useSessionStore().setUnitSystem('us')
  useSweepStore().sweep = sweep
  await flushPromises()
  return { ...mounted, asked, opened }
}

describe('SweepPointsTable', () => {
  it('keeps only the points whose boost lies between two values, asking the server with SI bounds', async () => {
    const { wrapper, asked } = await mountTable([row(0, 100, 1, 68_948), row(1, 100, 2, 34_474), row(2, 150, 1, null), row(3, 150, 2, 55_158)])
    // A static sweep: the boost metrics to pick from are its crack and full-open boost.
    expect(wrapper.find('[data-testid="sweep-points-range"]').exists()).toBe(true)
    await wrapper.find('[data-testid="sweep-points-from"] input').setValue('7')
    await wrapper.find('[data-testid="sweep-points-to"] input').setValue('9')
    await flushPromises()
    const last = Object.fromEntries(asked.at(-1)!)
    expect(last.between).toBe('crackBoostPa')
    expect(Number(last.from)).toBeCloseTo(7 * 6894.757, 1)
    expect(Number(last.to)).toBeCloseTo(9 * 6894.757, 1)
    expect(last.offset).toBe('0')
  })

  it("lists the points in the user's units, sorts by a column on the server and opens a row", async () => {
    // 100 N = 22.5 lbf; 68 948 Pa = 10.0 psi.
    const { wrapper, asked, opened } = await mountTable([row(0, 100, 1, 68_948), row(1, 100, 2, 34_474), row(2, 150, 1, null), row(3, 150, 2, 55_158)])
    const text = wrapper.find('[data-testid="sweep-points-table"]').text()
    expect(text).toContain('Spring seat force (lbf)')
    expect(text).toContain('Crack boost (psi)')
    expect(Object.fromEntries(asked[0]!)).toEqual({ offset: '0', limit: '10', sort: 'index', order: 'asc' })
    const cells = () => wrapper.findAll('tbody tr').map((tr) => tr.findAll('td').map((td) => td.text()))
    expect(cells()[0]).toEqual(['1', '22.5', '1.00', 'Opens', '10.0', '12.9'])
    expect(cells()[2]).toEqual(['3', '33.7', '1.00', 'Never opens', '—', '—'])

    const crackHeader = wrapper.findAll('th').find((th) => th.text().startsWith('Crack boost'))!
    await crackHeader.find('.v-data-table-header__content').trigger('click')
    await flushPromises()
    expect(asked.at(-1)?.get('sort')).toBe('crackBoostPa')
    expect(cells()[0]?.[0]).toBe('3')

    await wrapper.findAll('tbody tr')[1]!.trigger('click')
    expect(opened).toEqual([1])
  })

  it('filters the points by result on the server, back to the first page, and clears the filter', async () => {
    const many = Array.from({ length: 14 }, (_, i) => row(i, 100 + i, 1, i % 3 === 0 ? null : 60_000))
    const { wrapper, asked } = await mountTable(many)
    const cells = () => wrapper.findAll('tbody tr').map((tr) => tr.findAll('td').map((td) => td.text()))
    await wrapper.find('.v-pagination__next button').trigger('click')
    await flushPromises()
    expect(asked.at(-1)?.get('offset')).toBe('10')

    const filter = wrapper.findComponent('[data-testid="sweep-points-status"]') as VueWrapper<InstanceType<typeof VSelect>>
    expect((filter.props('items') as { title: string }[]).map((i) => i.title)).toEqual(['Opens', 'Never opens', 'Open at zero boost', 'Failed'])
    const before = asked.length
    filter.vm.$emit('update:modelValue', ['never-opens', 'failed'])
    await flushPromises()
    // One request for the new filter, from the first page.
    expect(asked.length).toBe(before + 1)
    expect(Object.fromEntries(asked.at(-1)!)).toEqual({ offset: '0', limit: '10', sort: 'index', order: 'asc', status: 'never-opens,failed' })
    expect(cells().map((c) => c[0])).toEqual(['1', '4', '7', '10', '13'])
    expect(cells().every((c) => c[3] === 'Never opens')).toBe(true)

    filter.vm.$emit('update:modelValue', ['failed'])
    await flushPromises()
    expect(asked.at(-1)?.get('status')).toBe('failed')
    expect(wrapper.find('[data-testid="sweep-points-table"]').text()).toContain('No points with those results.')

    filter.vm.$emit('update:modelValue', null)
    await flushPromises()
    expect(asked.at(-1)?.has('status')).toBe(false)
    expect(cells()).toHaveLength(10)
  })

  it('downloads every point as CSV with the token in the header, in the units on screen', async () => {
    localStorage.setItem('crackpoint.token', 'tok')
    const { wrapper } = await mountTable([row(0, 100, 1, 68_948)])
    const seen: { url: string; headers: Record<string, string> }[] = []
    vi.stubGlobal('fetch', async (url: string, init?: RequestInit) => {
      seen.push({ url, headers: (init?.headers ?? {}) as Record<string, string> })
      return new Response('index,crack\n0,10\n', {
        status: 200,
        headers: { 'Content-Type': 'text/csv', 'Content-Disposition': 'attachment; filename="sweep-check.csv"' },
      })
    })
    const created = vi.fn(() => 'blob:sweep')
    vi.stubGlobal('URL', Object.assign(URL, { createObjectURL: created, revokeObjectURL: vi.fn() }))
    const clicks: string[] = []
    vi.spyOn(HTMLAnchorElement.prototype, 'click').mockImplementation(function (this: HTMLAnchorElement) {
      clicks.push(this.download)
    })

    await wrapper.find('[data-testid="sweep-points-csv"]').trigger('click')
    await flushPromises()
    expect(seen[0]?.url).toBe('/api/sweeps/w1/points.csv?units=us')
    expect(seen[0]?.headers.Authorization).toBe('Bearer tok')
    expect(created).toHaveBeenCalledTimes(1)
    expect(clicks).toEqual(['sweep-check.csv'])
  })

  it('reads the file name of a download, the UTF-8 form first', () => {
    expect(filenameFrom('attachment; filename="plain.csv"')).toBe('plain.csv')
    expect(filenameFrom(`attachment; filename="a.csv"; filename*=UTF-8''CO%E2%82%82%20sweep.csv`)).toBe('CO₂ sweep.csv')
    expect(filenameFrom(null)).toBeNull()
  })
})
