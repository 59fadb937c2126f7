import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { useScenarioStore } from '@/stores/scenario'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/** Which side of the zero line a force's bar is drawn on, and the words beside it. */
function side(wrapper: VueWrapper, key: string) {
  const row = wrapper.find(`[data-testid="force-${key}"]`)
  if (!row.exists()) return { exists: false, text: '', closingBar: false, openingBar: false }
  return {
    exists: true,
    text: row.text(),
    closingBar: row.find('.force-track .force-half--closing .force-bar').exists(),
    openingBar: row.find('.force-track .force-half--opening .force-bar').exists(),
  }
}

/*
 * Default scenario at its crack boost b = 26 594 Pa (3.857 psi, hand-worked in balance-panel.test.ts):
 * drive 1.5·b on A_v = 1672.9 mm² opens 66.73 N = 15.0 lbf; boost on A_p − A_s = 2341.4 mm² opens 62.27 N
 * = 14.0 lbf; the spring closes 129 N = 29.0 lbf (1 lbf = 4.448222 N, NIST SP 811).
 */
describe('force diagram', () => {
  it('draws opening forces right of the zero line and closing forces left of it', async () => {
    const { wrapper } = await mountEditor()
    const drive = side(wrapper, 'drive')
    expect(drive.text).toContain('opens 15.0 lbf')
    expect([drive.openingBar, drive.closingBar]).toEqual([true, false])

    const bottom = side(wrapper, 'bottom')
    expect(bottom.text).toContain('opens 14.0 lbf')
    expect([bottom.openingBar, bottom.closingBar]).toEqual([true, false])

    const spring = side(wrapper, 'spring')
    expect(spring.text).toContain('closes 29.0 lbf')
    expect([spring.openingBar, spring.closingBar]).toEqual([false, true])

    // No top-port pressure here, so no top-chamber bar at all.
    expect(side(wrapper, 'top').exists).toBe(false)
    expect(wrapper.find('[data-testid="force-totals"]').text()).toBe('At crack, 29.0 lbf opening meets 29.0 lbf closing.')
  })

  it('puts a regulated top port on the closing side', async () => {
    const { wrapper } = await mountEditor()
    await wrapper.find('[data-testid="arrangement-both"] input[type="radio"]').setValue(true)
    await flushPromises()
    const top = side(wrapper, 'top')
    // 10 psi of CO₂ on the whole actuator, A_p = 3.746 in²: 37.5 lbf closing.
    expect(top.text).toContain('closes 37.5 lbf')
    expect(top.text).toContain('10.0 psi on 3.746 in²')
    expect([top.openingBar, top.closingBar]).toEqual([false, true])
  })

  it('plots crack and full-open boost over the ratio range in the user’s units', async () => {
    const { wrapper } = await mountEditor()
    await flushPromises()
    const plot = wrapper.find('[data-testid="ratio-plot"]').element as HTMLElement & {
      plotted?: { data: { name: string; x: number[]; y: (number | null)[] }[] }
    }
    const traces = plot.plotted?.data ?? []
    expect(traces.map((t) => t.name)).toEqual(['Crack', 'Full open'])
    expect(traces[0]?.x[0]).toBe(1)
    expect(traces[0]?.x[traces[0].x.length - 1]).toBeCloseTo(2, 9)
    // At r = 1.5 (index 10) the crack is the scenario's own, 3.857 psi.
    expect(traces[0]?.y[10]).toBeCloseTo(3.857, 2)

    // Boost can never open the valve at low ratios once boost itself loads the top port; those points are gaps.
    const store = useScenarioStore()
    store.draft!.control = { kind: 'top-supply' }
    await flushPromises()
    const crack = (plot.plotted?.data ?? [])[0]?.y ?? []
    expect(crack[0]).toBeNull()
    expect(crack.some((v) => v !== null)).toBe(true)
  })
})
