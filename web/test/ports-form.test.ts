import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { useScenarioStore } from '@/stores/scenario'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

async function choose(wrapper: VueWrapper, testId: string): Promise<void> {
  await wrapper.find(`[data-testid="${testId}"] input[type="radio"]`).setValue(true)
  await flushPromises()
}

const inputValue = (wrapper: VueWrapper, testId: string) =>
  (wrapper.find(`[data-testid="${testId}"] input`).element as HTMLInputElement).value

describe('port arrangement form', () => {
  it('shows the high-pressure gas caution and the regulator setpoint once a CO₂ bottle feeds the top port', async () => {
    const { wrapper } = await mountEditor()
    expect(wrapper.find('[data-testid="gas-caution"]').exists()).toBe(false)
    expect(wrapper.text()).not.toContain('Top-port supply')

    await choose(wrapper, 'arrangement-top-supply')
    await choose(wrapper, 'supply-boost')
    expect(wrapper.text()).toContain('Top-port supply')
    expect(wrapper.find('[data-testid="gas-caution"]').exists()).toBe(false)
    expect(wrapper.find('[data-testid="supply.regulatorSetpointPa"]').exists()).toBe(false)

    await choose(wrapper, 'supply-co2')
    expect(wrapper.find('[data-testid="gas-caution"]').text()).toContain('holds gas at high pressure')
    // The starting setpoint is 10 psi (68 948 Pa), shown with its unit beside it.
    const setpoint = wrapper.find('[data-testid="supply.regulatorSetpointPa"]')
    expect(setpoint.find('input').element.value).toBe('10')
    expect(setpoint.text()).toContain('psi')
    expect(wrapper.find('[data-testid="supply.fillMassKg"]').exists()).toBe(true)
    expect(wrapper.find('[data-testid="supply-state"]').text()).toContain('The top port gets 10.0 psi.')
  })

  it('shows the lines of the ports the arrangement connects, top and bottom side by side, and none with nothing connected', async () => {
    const { wrapper } = await mountEditor()
    const lines = () => wrapper.findAll('[data-testid^="plumbing."]').map((w) => w.attributes('data-testid'))
    await choose(wrapper, 'arrangement-bottom-boost')
    expect(lines()).toEqual(['plumbing.bottom.boreM', 'plumbing.bottom.lengthM', 'plumbing.bottom.restrictorDiameterM'])
    // 1/8 NPT ports with 4 mm hose, half a metre, by default: 0.157 in of bore.
    expect(inputValue(wrapper, 'plumbing.bottom.boreM')).toMatch(/^0\.157/)
    await choose(wrapper, 'arrangement-solenoid-4port')
    expect(lines()).toEqual([
      'plumbing.top.boreM',
      'plumbing.bottom.boreM',
      'plumbing.top.lengthM',
      'plumbing.bottom.lengthM',
      'plumbing.top.restrictorDiameterM',
      'plumbing.bottom.restrictorDiameterM',
    ])
    await choose(wrapper, 'arrangement-none')
    expect(lines()).toEqual([])
    expect(wrapper.text()).not.toContain('Lines to the ports')
  })

  it('keeps a compressor’s settings when the supply is switched away and back', async () => {
    const { wrapper } = await mountEditor()
    await choose(wrapper, 'arrangement-both')
    await choose(wrapper, 'supply-compressor')
    expect(wrapper.find('[data-testid="gas-caution"]').exists()).toBe(true)
    await wrapper.find('[data-testid="supply.cutInPa"] input').setValue('110')
    await choose(wrapper, 'supply-co2')
    expect(wrapper.find('[data-testid="supply.cutInPa"]').exists()).toBe(false)
    await choose(wrapper, 'supply-compressor')
    expect(inputValue(wrapper, 'supply.cutInPa')).toBe('110')
  })

  it('shows the settings of each solenoid and closed-loop arrangement', async () => {
    const { wrapper } = await mountEditor()
    await choose(wrapper, 'arrangement-solenoid-3port')
    expect(inputValue(wrapper, 'control.duty')).toBe('50')
    expect(wrapper.find('[data-testid="control.duty"]').text()).toContain('%')
    expect(wrapper.text()).not.toContain('Top-port supply')
    await wrapper.findAll('input[type="radio"]').find((r) => (r.element as HTMLInputElement).value === 'top')!.setValue(true)
    await flushPromises()
    expect(wrapper.text()).toContain('Top-port supply')

    await choose(wrapper, 'arrangement-closed-loop')
    expect(inputValue(wrapper, 'control.targetBoostPa')).toBe('20')
    expect(wrapper.find('[data-testid="control.proportionalPerPa"]').text()).toContain('%/psi')
    expect(wrapper.find('[data-testid="control.dutyMax"]').exists()).toBe(true)

    await choose(wrapper, 'arrangement-bleed-top')
    expect(inputValue(wrapper, 'control.fraction')).toBe('50')
    expect(useScenarioStore().live?.ok).toBe(true)
  })

  it('shows sim-core’s message beside the field it names, in the field’s own unit', async () => {
    const { wrapper } = await mountEditor()
    await choose(wrapper, 'arrangement-solenoid-4port')
    await wrapper.find('[data-testid="control.duty"] input').setValue('150')
    await flushPromises()
    expect(wrapper.find('[data-testid="control.duty"]').text()).toContain('must be at most 100 %')
    expect(wrapper.find('[data-testid="balance-issues"]').text()).toContain('Solenoid duty must be at most 100 %')
  })

  it('warns when a closed-loop target is above the boost limit', async () => {
    const { wrapper } = await mountEditor()
    await choose(wrapper, 'arrangement-closed-loop')
    expect(wrapper.find('[data-testid="target-over-limit"]').exists()).toBe(false)
    await wrapper.find('[data-testid="control.targetBoostPa"] input').setValue('30')
    await flushPromises()
    expect(wrapper.find('[data-testid="target-over-limit"]').text()).toContain("above this scenario's boost limit of 25.0 psi")
  })

  it('asks for a restriction coefficient only for a restricted dump', async () => {
    const { wrapper } = await mountEditor()
    expect(wrapper.find('[data-testid="exhaust.downstream.coefficientPaPerKg2S2"]').exists()).toBe(false)
    await choose(wrapper, 'downstream-restricted')
    expect(wrapper.find('[data-testid="exhaust.downstream.coefficientPaPerKg2S2"]').text()).toContain('psi/(lb/s)²')
    expect(wrapper.find('[data-testid="behind-valve"]').text()).toContain('behind the valve')
    await choose(wrapper, 'downstream-recirculated')
    expect(wrapper.find('[data-testid="exhaust.downstream.coefficientPaPerKg2S2"]').exists()).toBe(false)
  })
})
