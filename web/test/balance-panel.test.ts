import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { useScenarioStore } from '@/stores/scenario'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/*
 * Hand-worked crack boost of sim-core's default scenario (MODEL.md §3, bottom port on boost, vented):
 * b = F0 / (r·A_v + (A_p − A_s)) with F0 = 129 N, r = 1.5, valve Ø 46.152 mm, shaft Ø 9.8044 mm,
 * actuator Ø 55.4736 mm: A_v = 1672.9 mm², A_p − A_s = 2341.4 mm², b = 129 / 0.0048508 m² = 26 594 Pa
 * = 3.857 psi (1 psi = 6894.757 Pa, NIST SP 811) = 26.59 kPa. Full open adds k·x_max = 3500 N/m · 12.7 mm:
 * 173.45 N / 0.0048508 m² = 35 757 Pa = 5.186 psi.
 */
describe('BalancePanel', () => {
  it('shows the crack boost of a known scenario and follows the unit switch', async () => {
    const { wrapper } = await mountEditor()
    const crack = () => wrapper.find('[data-testid="crack-boost"]').text()
    const fullOpen = () => wrapper.find('[data-testid="full-open-boost"]').text()

    expect(crack()).toBe('3.9 psi')
    expect(fullOpen()).toBe('5.2 psi')

    const metric = wrapper.findAll('[data-testid="unit-switch"] button').find((b) => b.text() === 'Metric')
    expect(metric).toBeDefined()
    await metric!.trigger('click')
    await flushPromises()
    expect(crack()).toBe('26.6 kPa')
    expect(fullOpen()).toBe('35.8 kPa')
    // The form follows the same switch: the valve diameter is now in millimetres.
    const valve = wrapper.find('[data-testid="wastegate.valveDiameterM"] input')
    expect((valve.element as HTMLInputElement).value).toBe('46.15')

    const us = wrapper.findAll('[data-testid="unit-switch"] button').find((b) => b.text() === 'US')
    await us!.trigger('click')
    await flushPromises()
    expect(crack()).toBe('3.9 psi')
    expect((valve.element as HTMLInputElement).value).toBe('1.817')
  })

  it('recomputes the crack boost as the seat force is typed', async () => {
    const { wrapper } = await mountEditor()
    const seat = wrapper.find('[data-testid="springs.0.seatForceN"] input')
    expect((seat.element as HTMLInputElement).value).toBe('29')

    // 40 lbf = 177.93 N (NIST SP 811): 177.93 N / 0.0048508 m² = 36 681 Pa = 5.320 psi.
    await seat.setValue('40')
    await flushPromises()
    expect(wrapper.find('[data-testid="crack-boost"]').text()).toBe('5.3 psi')
  })

  it('says in words when boost can never open the valve', async () => {
    const { wrapper } = await mountEditor()
    // Top port alone on boost itself at a 1.2 ratio: drive pressure on the valve face (1.2 × 1672.9 mm²
    // = 2007 mm²) is less than boost on the whole actuator (2416.9 mm²): the opening area is negative.
    const store = useScenarioStore()
    store.draft!.control = { kind: 'top-supply' }
    store.setNumber('exhaust.ratio', 1.2)
    await flushPromises()
    expect(wrapper.find('[data-testid="crack-boost"]').text()).toBe('Never opens')
    expect(wrapper.text()).toContain('Boost can never open the valve')
  })
})
