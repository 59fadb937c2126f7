import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/*
 * Net areas of sim-core's default gate (MODEL.md §1), valve Ø 1.817 in, shaft Ø 0.386 in, actuator Ø 2.184 in:
 * A_p = π/4 · 2.184² = 3.746 in² = 2416.9 mm²; A_p − A_s = 3.629 in² = 2341.4 mm²; A_s = 0.117 in² = 75.5 mm²;
 * A_v = 2.593 in² = 1672.9 mm²; A_v − A_s = 2.476 in² = 1597.4 mm² (1 in = 25.4 mm exactly, NIST SP 811).
 */
const label = (wrapper: VueWrapper, key: string) => wrapper.find(`[data-testid="area-${key}"]`).text()

async function switchUnits(wrapper: VueWrapper, name: 'US' | 'Metric'): Promise<void> {
  await wrapper.findAll('[data-testid="unit-switch"] button').find((b) => b.text() === name)!.trigger('click')
  await flushPromises()
}

describe('wastegate areas picture', () => {
  it('labels each net area in the user’s units and follows the unit switch', async () => {
    const { wrapper } = await mountEditor()
    expect(label(wrapper, 'top')).toContain('3.746 in²')
    expect(label(wrapper, 'bottom')).toContain('3.629 in²')
    expect(label(wrapper, 'shaft')).toContain('0.117 in²')
    expect(label(wrapper, 'back')).toContain('2.476 in²')
    expect(label(wrapper, 'face')).toContain('2.593 in²')
    expect(label(wrapper, 'face')).toContain('Ø 1.817 in')

    await switchUnits(wrapper, 'Metric')
    expect(label(wrapper, 'top')).toContain('2416.9 mm²')
    expect(label(wrapper, 'bottom')).toContain('2341.4 mm²')
    expect(label(wrapper, 'face')).toContain('1672.9 mm²')
    expect(label(wrapper, 'face')).toContain('Ø 46.15 mm')
    expect(wrapper.find('[data-testid="areas-picture"]').text()).not.toContain('in²')

    await switchUnits(wrapper, 'US')
    expect(label(wrapper, 'bottom')).toContain('3.629 in²')
  })

  it('redraws to scale as a diameter is typed', async () => {
    const { wrapper } = await mountEditor()
    /** Drawn width of the valve head: its path runs through (CX + w/2, …) as the 3rd point and (CX − w/2, …) as the 5th. */
    const valveWidth = () => {
      const numbers = (wrapper.find('[data-testid="valve-head"]').attributes('d') ?? '').match(/-?\d+(\.\d+)?/g)!.map(Number)
      return numbers[4]! - numbers[8]!
    }
    // The actuator is the widest part, drawn 170 units wide: the valve is 170 · 1.817 / 2.184 = 141.4.
    expect(valveWidth()).toBeCloseTo(141.4, 1)
    // A 3.000 in actuator: A_p = π/4 · 9 = 7.069 in²; A_p − A_s = 7.069 − 0.117 = 6.952 in²; valve 170 · 1.817 / 3 = 103.0.
    await wrapper.find('[data-testid="wastegate.actuatorDiameterM"] input').setValue('3')
    await flushPromises()
    expect(label(wrapper, 'top')).toContain('7.069 in²')
    expect(label(wrapper, 'bottom')).toContain('6.952 in²')
    expect(valveWidth()).toBeCloseTo(103.0, 1)
  })

  it('colours the chambers by what feeds them and says so in words', async () => {
    const { wrapper } = await mountEditor()
    expect(wrapper.find('[data-testid="areas-picture"] figcaption').text()).toContain('Top port: open to the air · bottom port: boost')
    await wrapper.find('[data-testid="arrangement-both"] input[type="radio"]').setValue(true)
    await flushPromises()
    expect(wrapper.find('[data-testid="areas-picture"] figcaption').text()).toContain('Top port: regulated supply · bottom port: boost')
  })

  it('waits for valid diameters instead of drawing a wrong gate', async () => {
    const { wrapper } = await mountEditor()
    await wrapper.find('[data-testid="wastegate.shaftDiameterM"] input').setValue('')
    await flushPromises()
    expect(wrapper.find('[data-testid="areas-picture"]').text()).toContain('The picture shows once the diameters are valid.')
  })
})
