import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/*
 * The default gate's bottom chamber (MODEL.md §1): A_p − A_s = π/4 · (2.184² − 0.386²) in² = 3.6292 in²
 * (diameters of sim-core's default scenario). A 10 psi bench crack gives F0 = 10 psi · 3.6292 in² = 36.29 lbf.
 */
describe('nested springs', () => {
  it('shows the seat force a bench crack pressure gives, and adds it to the outer spring', async () => {
    const { wrapper } = await mountEditor()
    await wrapper.find('[data-testid="add-spring"]').trigger('click')
    await flushPromises()
    const inner = wrapper.find('[data-testid="spring-1"]')
    expect(inner.text()).toContain('Spring 2, inside spring 1')

    await inner.findAll('input[type="radio"]').find((r) => (r.element as HTMLInputElement).value === 'bench')!.setValue(true)
    await flushPromises()
    await wrapper.find('[data-testid="springs.1.benchCrackPressurePa"] input').setValue('10')
    await flushPromises()
    expect(wrapper.find('[data-testid="bench-seat-force-1"]').text()).toContain('seat force of 36.3 lbf')
    // 29.0 lbf outer + 36.3 lbf inner; rates 19.99 + 10.00 lbf/in (3500 N/m and 1751 N/m).
    expect(wrapper.find('[data-testid="spring-totals"]').text()).toBe('Together: 65.3 lbf seat force, 30.0 lbf/in')
    // F0 = 129 N + 161.4 N = 290.4 N over r·A_v + (A_p − A_s) = 0.0048508 m²: 59 869 Pa = 8.68 psi.
    expect(wrapper.find('[data-testid="crack-boost"]').text()).toBe('8.7 psi')
  })

  it('takes up to three springs and removes any but the last one left', async () => {
    const { wrapper } = await mountEditor()
    const add = () => wrapper.find('[data-testid="add-spring"]')
    await add().trigger('click')
    await add().trigger('click')
    await flushPromises()
    expect(wrapper.findAll('fieldset.spring-fieldset')).toHaveLength(3)
    expect(add().attributes('disabled')).toBeDefined()
    expect(wrapper.text()).toContain('Three springs is the most a gate takes here.')

    await wrapper.find('[data-testid="remove-spring-1"]').trigger('click')
    await wrapper.find('[data-testid="remove-spring-1"]').trigger('click')
    await flushPromises()
    expect(wrapper.findAll('fieldset.spring-fieldset')).toHaveLength(1)
    expect(wrapper.find('[data-testid="remove-spring-0"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="crack-boost"]').text()).toBe('3.9 psi')
  })
})
