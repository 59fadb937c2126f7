import { afterEach, describe, expect, it } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { defaultScenario, scenarioSchema } from '@crackpoint/sim-core'
import { useScenarioStore } from '@/stores/scenario'
import { mountEditor } from './mount-editor'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/** The default scenario on a closed loop with a 20 psi (137 895 Pa) target. */
function closedLoop() {
  return scenarioSchema.parse({ ...defaultScenario(), control: { kind: 'closed-loop', targetBoostPa: 137_895 }, supply: { kind: 'co2', regulatorSetpointPa: 68_948 } })
}

const input = (wrapper: VueWrapper, testId: string) => wrapper.find(`[data-testid="${testId}"] input`)
const messages = (wrapper: VueWrapper, testId: string) =>
  wrapper.find(`[data-testid="${testId}"]`).element.closest('.v-input')?.querySelector('.v-messages')?.textContent ?? ''

async function typeInto(wrapper: VueWrapper, testId: string, text: string): Promise<void> {
  await input(wrapper, testId).setValue(text)
  await flushPromises()
}

describe('rpm table editors', { timeout: 20_000 }, () => {
  it('builds a boost target table row by row, keeps it in rpm order and shows it in the chosen units', async () => {
    const { wrapper } = await mountEditor(closedLoop())
    const table = () => wrapper.find('[data-testid="control-targetByRpm"]')
    expect(table().text()).toContain('No table: the boost target above holds at every engine speed.')

    await wrapper.find('[data-testid="control-targetByRpm-add"]').trigger('click')
    await wrapper.find('[data-testid="control-targetByRpm-add"]').trigger('click')
    await flushPromises()
    expect((input(wrapper, 'control.targetByRpm.0.rpm').element as HTMLInputElement).value).toBe('3000')
    expect((input(wrapper, 'control.targetByRpm.1.rpm').element as HTMLInputElement).value).toBe('3500')
    expect((input(wrapper, 'control.targetByRpm.1.boostPa').element as HTMLInputElement).value).toBe('20')
    expect(table().text()).toContain('psi')

    await typeInto(wrapper, 'control.targetByRpm.1.rpm', '2500')
    await typeInto(wrapper, 'control.targetByRpm.1.boostPa', '15')
    // Still where it was typed while the cursor is in the table.
    expect((input(wrapper, 'control.targetByRpm.1.rpm').element as HTMLInputElement).value).toBe('2500')
    await table().find('[role="table"]').trigger('focusout')
    await flushPromises()
    expect((input(wrapper, 'control.targetByRpm.0.rpm').element as HTMLInputElement).value).toBe('2500')
    expect((input(wrapper, 'control.targetByRpm.0.boostPa').element as HTMLInputElement).value).toBe('15')

    const store = useScenarioStore()
    const saved = store.draft?.control.kind === 'closed-loop' ? store.draft.control.targetByRpm : undefined
    expect(saved?.map((row) => row.rpm)).toEqual([2500, 3000])
    expect(saved?.[0]?.boostPa).toBeCloseTo(103_421, 0) // 15 psi

    await wrapper.find('[data-testid="unit-switch"] button:last-child').trigger('click')
    await flushPromises()
    expect((input(wrapper, 'control.targetByRpm.0.boostPa').element as HTMLInputElement).value).toBe('103.4')
    expect(table().text()).toContain('kPa')

    await typeInto(wrapper, 'control.targetByRpm.0.rpm', '0')
    expect(messages(wrapper, 'control.targetByRpm.0.rpm')).toContain('must be greater than 0 rpm')

    await wrapper.find('[data-testid="control-targetByRpm-remove-0"]').trigger('click')
    await wrapper.find('[data-testid="control-targetByRpm-remove-0"]').trigger('click')
    await flushPromises()
    expect(table().text()).toContain('No table')
    expect(store.draft?.control.kind === 'closed-loop' && 'targetByRpm' in store.draft.control).toBe(false)
  })

  it('edits the volumetric-efficiency table in per cent and names the row that breaks rpm order', async () => {
    const { wrapper } = await mountEditor()
    await wrapper.find('[data-testid="advanced-engine"] button').trigger('click')
    await flushPromises()
    const table = () => wrapper.find('[data-testid="engine-volumetricEfficiencyByRpm"]')
    expect(table().text()).toContain('No table: the volumetric efficiency above holds at every engine speed.')

    await wrapper.find('[data-testid="engine-volumetricEfficiencyByRpm-add"]').trigger('click')
    await wrapper.find('[data-testid="engine-volumetricEfficiencyByRpm-add"]').trigger('click')
    await flushPromises()
    expect((input(wrapper, 'engine.volumetricEfficiencyByRpm.0.volumetricEfficiency').element as HTMLInputElement).value).toBe('90')
    expect(table().text()).toContain('%')

    await typeInto(wrapper, 'engine.volumetricEfficiencyByRpm.1.volumetricEfficiency', '160')
    expect(messages(wrapper, 'engine.volumetricEfficiencyByRpm.1.volumetricEfficiency')).toContain('must be at most 150')

    await typeInto(wrapper, 'engine.volumetricEfficiencyByRpm.1.volumetricEfficiency', '95')
    await typeInto(wrapper, 'engine.volumetricEfficiencyByRpm.1.rpm', '2000')
    expect(messages(wrapper, 'engine.volumetricEfficiencyByRpm.1.rpm')).toContain('must be larger than the rpm before it')
    expect(wrapper.find('[data-testid="advanced-engine"]').text()).toContain('1 to fix')

    await table().find('[role="table"]').trigger('focusout')
    await flushPromises()
    expect(messages(wrapper, 'engine.volumetricEfficiencyByRpm.1.rpm')).not.toContain('must be larger')
    const rows = useScenarioStore().draft?.engine.volumetricEfficiencyByRpm ?? []
    expect(rows.map((row) => row.rpm)).toEqual([2000, 3000])
    expect(rows[0]?.volumetricEfficiency).toBeCloseTo(0.95, 12)
    expect(rows[1]?.volumetricEfficiency).toBeCloseTo(0.9, 12)
    expect(useScenarioStore().live?.ok).toBe(true)
  })
})
