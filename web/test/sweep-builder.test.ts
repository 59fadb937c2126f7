import { afterEach, describe, expect, it } from 'vitest'
import { defineComponent, h, ref } from 'vue'
import { enableAutoUnmount, flushPromises } from '@vue/test-utils'
import { VAutocomplete } from 'vuetify/components'
import { defaultScenario, fromSI, parseScenario, toSI, units, type Scenario } from '@crackpoint/sim-core'
import type { SweepAxisRequest, SweepEstimate, SweepLevel } from '@/api/types'
import SweepBuilder from '@/components/SweepBuilder.vue'
import { useSessionStore } from '@/stores/session'
import { mountApp } from './mount-app'

enableAutoUnmount(afterEach)
afterEach(() => localStorage.clear())

/** A CO₂-fed default scenario, so the regulator setpoint is one of its numbers. */
function co2Scenario(): Scenario {
  const parsed = parseScenario({ ...defaultScenario(), supply: { kind: 'co2', regulatorSetpointPa: 200_000 } })
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues))
  return parsed.scenario
}

async function mountBuilder(scenario: Scenario = defaultScenario(), blocker: string | null = null) {
  const started: { level: SweepLevel; axes: SweepAxisRequest[] }[] = []
  const changes: { level: SweepLevel; axes: SweepAxisRequest[] | null }[] = []
  const errors = ref<Record<string, string>>({})
  const estimate = ref<SweepEstimate | null>(null)
  const Host = defineComponent({
    setup() {
      return () =>
        h(SweepBuilder, {
          scenario,
          blocker,
          busy: false,
          starting: false,
          serverErrors: errors.value,
          estimate: estimate.value,
          estimateLoading: false,
          estimateError: null,
          onStart: (level: SweepLevel, axes: SweepAxisRequest[]) => started.push({ level, axes }),
          onChange: (level: SweepLevel, axes: SweepAxisRequest[] | null) => changes.push({ level, axes }),
        })
    },
  })
  const mounted = await mountApp(Host)
  const session = useSessionStore()
  session.user = {
    id: 'u1',
    email: 'engineer@harrowlane.example',
    displayName: 'Shop engineer',
    role: 'engineer',
    unitSystem: 'us',
    workspace: { id: 'w1', name: 'Harrow Lane Boostworks' },
  }
  await flushPromises()
  return { ...mounted, started, changes, errors, estimate, session }
}

describe('SweepBuilder', () => {
  it('starts over the spring seat force and the ratio and previews the point count as the axes change', async () => {
    const { wrapper, started } = await mountBuilder()
    const count = () => wrapper.find('[data-testid="sweep-summary"]').text()
    // Seat force 70 % to 130 % of the default spring's 129 N, ratio 1 to 2: five values each.
    expect(count()).toContain('25 points')
    expect(wrapper.find('[data-testid="sweep-0-preview"]').text()).toBe('5 values: 20.3 lbf · 24.7 lbf · 29.0 lbf · 33.4 lbf · 37.7 lbf')

    await wrapper.find('[data-testid="sweep-1-count"] input').setValue('4')
    await flushPromises()
    expect(count()).toContain('20 points')

    await wrapper.find('[data-testid="sweep-add-axis"]').trigger('click')
    await flushPromises()
    expect(wrapper.findAll('fieldset.sweep-axis')).toHaveLength(3)
    expect(count()).toContain('100 points')
    // Three axes is the most a sweep takes.
    expect(wrapper.find('[data-testid="sweep-add-axis"]').exists()).toBe(false)

    await wrapper.find('[data-testid="sweep-level-both"]').trigger('click')
    await flushPromises()
    expect(count()).toContain('100 points at both levels')

    await wrapper.find('[data-testid="sweep-2-remove"]').trigger('click')
    await flushPromises()
    expect(count()).toContain('20 points')

    await wrapper.find('form').trigger('submit')
    await flushPromises()
    expect(started.at(-1)).toEqual({
      level: 'both',
      axes: [
        { path: 'springs.0.seatForceN', range: { from: 129 * 0.7, to: 129 * 1.3, count: 5 } },
        { path: 'exhaust.ratio', range: { from: 1, to: 2, count: 4 } },
      ],
    })
  })

  it('offers the supply setpoint and any other number of the scenario, and takes a list in the shown unit', async () => {
    const { wrapper, started } = await mountBuilder(co2Scenario())
    const picker = wrapper.findAllComponents(VAutocomplete)[1]!
    const items = picker.props('items') as { value: string; title: string }[]
    expect(items.slice(0, 3).map((i) => i.title)).toEqual(['Spring seat force', 'Regulator setpoint', 'Drive-to-boost ratio'])
    expect(items.map((i) => i.value)).toContain('engine.rpmEnd')

    picker.vm.$emit('update:modelValue', 'supply.regulatorSetpointPa')
    await flushPromises()
    await wrapper.find('[data-testid="sweep-1-mode-list"]').trigger('click')
    await flushPromises()
    // Switching to a list keeps the range's values: 70 % to 130 % of 200 kPa (29.01 psi).
    expect((wrapper.find('[data-testid="sweep-1-list"] input').element as HTMLInputElement).value).toBe('20.31; 24.66; 29.01; 33.36; 37.71')
    await wrapper.find('[data-testid="sweep-1-list"] input').setValue('25; 30, 35')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-1-preview"]').text()).toBe('3 values: 25.0 psi · 30.0 psi · 35.0 psi')
    expect(wrapper.find('[data-testid="sweep-summary"]').text()).toContain('15 points')

    await wrapper.find('form').trigger('submit')
    await flushPromises()
    const axis = started[0]?.axes[1]
    expect(axis?.path).toBe('supply.regulatorSetpointPa')
    expect(axis?.values?.map((v) => fromSI(units.psi, v))).toEqual([25, 30, 35].map((v) => expect.closeTo(v, 9)))
  })

  it('rewrites a typed list when the units switch, so it still means the same values', async () => {
    const { wrapper, session, started } = await mountBuilder()
    await wrapper.find('[data-testid="sweep-0-mode-list"]').trigger('click')
    await wrapper.find('[data-testid="sweep-0-list"] input').setValue('30; 35')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-0-list"]').text()).toContain('lbf')

    session.setUnitSystem('metric')
    await flushPromises()
    // 30 lbf = 133.4 N and 35 lbf = 155.7 N (1 lbf = 4.448 N).
    expect((wrapper.find('[data-testid="sweep-0-list"] input').element as HTMLInputElement).value).toBe('133.4; 155.7')
    expect(wrapper.find('[data-testid="sweep-0-list"]').text()).toContain('N')
    expect(wrapper.find('[data-testid="sweep-0-preview"]').text()).toBe('2 values: 133 N · 156 N')
    // The range fields of the other axis follow as well: a ratio reads the same in both systems.
    expect((wrapper.find('[data-testid="sweep-1-from"] input').element as HTMLInputElement).value).toBe('1')

    await wrapper.find('form').trigger('submit')
    await flushPromises()
    const values = started[0]?.axes[0]?.values ?? []
    // Four significant figures of the shown text: within 0.05 N of 30 lbf and 35 lbf.
    expect(values[0]).toBeCloseTo(toSI(units.lbf, 30), 1)
    expect(values[1]).toBeCloseTo(toSI(units.lbf, 35), 1)
  })

  it('names what is wrong beside the field and starts nothing until it is fixed', async () => {
    const { wrapper, started } = await mountBuilder()
    const start = () => wrapper.find('[data-testid="start-sweep"]')

    await wrapper.find('[data-testid="sweep-1-count"] input').setValue('0')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-1-count"]').text()).toContain('a whole number from 1 to 1000')
    expect(wrapper.find('[data-testid="sweep-summary"]').text()).toContain('Fix the axes above')
    expect(start().attributes('disabled')).toBeDefined()
    await wrapper.find('[data-testid="sweep-1-count"] input').setValue('3')

    await wrapper.find('[data-testid="sweep-0-from"] input').setValue('')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-0-from"]').text()).toContain('needs a number')
    await wrapper.find('[data-testid="sweep-0-from"] input').setValue('25')

    await wrapper.find('[data-testid="sweep-1-mode-list"]').trigger('click')
    await wrapper.find('[data-testid="sweep-1-list"] input').setValue('1.2; abc')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-1-list"]').text()).toContain('"abc" is not a number')
    await wrapper.find('[data-testid="sweep-1-list"] input').setValue('1,2; 1,6')
    await flushPromises()
    // A comma between digits is a decimal mark.
    expect(wrapper.find('[data-testid="sweep-1-preview"]').text()).toBe('2 values: 1.20 · 1.60')

    wrapper.findAllComponents(VAutocomplete)[1]!.vm.$emit('update:modelValue', 'springs.0.seatForceN')
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-axis-1"]').text()).toContain('is already swept by another axis')
    expect(start().attributes('disabled')).toBeDefined()
    await wrapper.find('form').trigger('submit')
    expect(started).toEqual([])
  })

  it('says why it cannot start when the scenario has unsaved edits', async () => {
    const { wrapper } = await mountBuilder(defaultScenario(), 'Save the scenario first: a sweep runs the saved version.')
    expect(wrapper.text()).toContain('Save the scenario first')
    expect(wrapper.find('[data-testid="start-sweep"]').attributes('disabled')).toBeDefined()
  })

  it('tells the panel each valid sweep to price, and shows the cost against what is left this month', async () => {
    const { wrapper, changes, estimate, errors } = await mountBuilder()
    expect(changes.at(-1)?.axes).toHaveLength(2)
    await wrapper.find('[data-testid="sweep-level-dynamic"]').trigger('click')
    await flushPromises()
    expect(changes.at(-1)?.level).toBe('dynamic')
    await wrapper.find('[data-testid="sweep-0-count"] input').setValue('')
    await flushPromises()
    expect(changes.at(-1)?.axes).toBeNull()
    await wrapper.find('[data-testid="sweep-0-count"] input').setValue('6')
    await flushPromises()
    expect(changes.at(-1)?.axes?.[0]?.range?.count).toBe(6)

    estimate.value = { pointCount: 30, computeUnits: 30, remaining: { member: null, workspace: 970 } }
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-cost"]').text()).toBe('Costs 30 compute units; 970 compute units left this month.')

    estimate.value = { pointCount: 30, computeUnits: 30, remaining: { member: 12, workspace: 970 } }
    await flushPromises()
    const cost = wrapper.find('[data-testid="sweep-cost"]')
    expect(cost.text()).toBe(
      'Costs 30 compute units; 12 compute units left this month of your own monthly limit. That is more than is left: the sweep would be refused.',
    )
    expect(cost.classes()).toContain('text-error')

    // The estimate checks the axes against the saved scenario: its refusal shows beside the field it names.
    errors.value = { 'axes.0.range': '-5 gives springs.0.seatForceN that must be at least 0' }
    await flushPromises()
    expect(wrapper.find('[data-testid="sweep-0-from"]').text()).toContain('-5 gives the spring seat force that must be at least 0.0 lbf')
  })
})
