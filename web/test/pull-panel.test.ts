import { afterEach, describe, expect, it, vi } from 'vitest'
import { enableAutoUnmount, flushPromises, type VueWrapper } from '@vue/test-utils'
import { defaultScenario, formatQuantity, parseScenario, runPull, type Scenario } from '@crackpoint/sim-core'
import { mountEditor } from './mount-editor'

/*
 * The worker is the browser's; here the same sim-core pull runs in the test's own thread behind the same
 * client interface, and every run is counted.
 */
const runs: Scenario[] = []
vi.mock('@/workers/pull-client', () => {
  class PullCancelled extends Error {}
  return {
    PullCancelled,
    createPullClient: () => ({
      run: async (scenario: Scenario) => {
        runs.push(scenario)
        return { result: runPull(scenario), elapsedMs: 1 }
      },
      cancel: () => undefined,
    }),
  }
})

enableAutoUnmount(afterEach)
afterEach(() => {
  localStorage.clear()
  runs.length = 0
})

type Plotted = HTMLElement & { plotted?: { data: { name: string; xaxis: string; yaxis: string }[]; layout: Record<string, unknown> } }

async function settle(ms = 0): Promise<void> {
  await new Promise((resolve) => setTimeout(resolve, ms))
  await flushPromises()
}

const text = (wrapper: VueWrapper, testId: string) => wrapper.find(`[data-testid="${testId}"]`).text()

describe('pull panel', () => {
  it('runs a pull of the open scenario and lists its metrics and flags in words', async () => {
    const { wrapper } = await mountEditor(defaultScenario(), { withPull: true })
    await settle()
    expect(runs).toHaveLength(1)

    const parsed = parseScenario(defaultScenario())
    if (!parsed.ok) throw new Error('default scenario invalid')
    const expected = runPull(parsed.scenario).metrics
    expect(text(wrapper, 'pull-crack')).toContain(`at ${formatQuantity('pressure', 'us', expected.crackBoostPa!)}`)
    expect(text(wrapper, 'pull-settled')).toBe(formatQuantity('pressure', 'us', expected.settledBoostPa!))
    expect(text(wrapper, 'pull-static')).toContain('which the settled boost matches')
    expect(text(wrapper, 'pull-creep')).toBe('none: the valve never reached full lift')
    expect(text(wrapper, 'pull-flags')).toContain('Nothing to flag in this pull.')
    expect(wrapper.text()).toContain('Ratio mode')
  })

  it('lays out a solenoid-fed CO₂ top port’s gas budget: what the lines hold, what passes while armed, a session', async () => {
    const parsed = parseScenario({
      ...defaultScenario(),
      control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 },
      supply: { kind: 'co2', regulatorSetpointPa: 103_421 },
    })
    if (!parsed.ok) throw new Error(`the CO₂ scenario is not valid: ${JSON.stringify(parsed.issues)}`)
    const { wrapper } = await mountEditor(parsed.scenario, { withPull: true })
    await settle()
    expect(text(wrapper, 'pull-held')).toMatch(/ g at the setpoint$/)
    expect(text(wrapper, 'pull-armed')).toMatch(/ g a minute pass the solenoid to its vent$/)
    expect(text(wrapper, 'pull-session')).toMatch(/ g, \d+ % of a full bottle$/)
  })

  it('takes the session the supply card plans for: its pulls, armed time and venting', async () => {
    const parsed = parseScenario({
      ...defaultScenario(),
      control: { kind: 'solenoid-3port', chamber: 'top', duty: 0.5 },
      supply: { kind: 'co2', regulatorSetpointPa: 103_421, sessionPulls: 25, sessionArmedS: 5400, ventAfterEachPull: true },
    })
    if (!parsed.ok) throw new Error(`the CO₂ scenario is not valid: ${JSON.stringify(parsed.issues)}`)
    const { wrapper } = await mountEditor(parsed.scenario, { withPull: true })
    await settle()
    expect(wrapper.find('[data-testid="pull-session"]').element.closest('div')?.parentElement?.textContent).toContain(
      'A session of 25 pulls, 90 min armed, lines vented after each pull',
    )
    // What the form shows: the armed time in minutes, the venting ticked.
    expect((wrapper.find('[data-testid="supply.sessionArmedS"] input').element as HTMLInputElement).value).toBe('90')
    expect((wrapper.find('[data-testid="vent-after-each-pull"] input').element as HTMLInputElement).checked).toBe(true)
  })

  it('says, in turbine mode, what ratio the pull made beside the ratio the static figures use', async () => {
    const base = defaultScenario()
    const turbine = { ...base, exhaust: { ...base.exhaust, mode: 'turbine' as const } }
    const { wrapper } = await mountEditor(turbine, { withPull: true })
    await settle()
    const seen = runPull(turbine).metrics.driveRatioSeen!
    const line = text(wrapper, 'turbine-ratio')
    expect(line).toContain(`made drive pressure ${formatQuantity('ratio', 'us', seen)} times boost`)
    expect(line).toContain(`use the ${formatQuantity('ratio', 'us', base.exhaust.ratio)} entered`)
    expect(line).toMatch(/At the pull's ratio the gate cracks at \d+\.\d psi\./)
    // Ratio mode has no such line: there the ratio entered is the pull's own.
    const ratio = await mountEditor(base, { withPull: true })
    await settle()
    expect(ratio.wrapper.find('[data-testid="turbine-ratio"]').exists()).toBe(false)
  })

  it('plots every series on one shared time axis, with a hover that spans them all', async () => {
    const parsed = parseScenario({ ...defaultScenario(), control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: 68_948 } })
    if (!parsed.ok) throw new Error(`the CO₂ scenario is not valid: ${JSON.stringify(parsed.issues)}`)
    const { wrapper } = await mountEditor(parsed.scenario, { withPull: true })
    await settle()
    const plot = wrapper.find('[data-testid="pull-plots"]').element as Plotted
    const traces = plot.plotted?.data ?? []
    expect(traces.map((t) => t.name)).toEqual([
      'Boost',
      'Drive pressure',
      'Valve lift',
      'Shaft speed',
      'Top chamber',
      'Bottom chamber',
      'Regulator delivers',
      'Bottle or tank',
    ])
    expect(new Set(traces.map((t) => t.xaxis))).toEqual(new Set(['x']))
    expect(new Set(traces.map((t) => t.yaxis)).size).toBe(5)
    expect(plot.plotted?.layout.hovermode).toBe('x unified')
    expect(plot.plotted?.layout.hoversubplots).toBe('axis')
    expect((plot.plotted?.layout.xaxis as { spikemode: string }).spikemode).toBe('across')
    expect(text(wrapper, 'pull-metrics')).toContain('Pulls per bottle')
    // Well under a gram per pull from a bottle, still shown to three figures rather than as nothing.
    const gas = text(wrapper, 'pull-gas')
    expect(gas).toMatch(/^\d+\.\d+ g$/)
    expect(Number.parseFloat(gas)).toBeGreaterThan(0)
  })

  it('runs again a moment after an edit, and says when the plots are of an earlier version', async () => {
    const { wrapper } = await mountEditor(defaultScenario(), { withPull: true })
    await settle()
    expect(runs).toHaveLength(1)

    await wrapper.find('[data-testid="springs.0.seatForceN"] input').setValue('40')
    await flushPromises()
    expect(text(wrapper, 'pull-status')).toBe('The plots show an earlier version of this scenario.')
    await settle(700)
    expect(runs).toHaveLength(2)
    // 40 lbf = 177.93 N (NIST SP 811).
    expect(runs[1]?.springs[0]).toMatchObject({ from: 'seat' })
    expect((runs[1]?.springs[0] as { seatForceN: number }).seatForceN).toBeCloseTo(177.929, 2)
    expect(text(wrapper, 'pull-status')).toBe('')
  })

  it('waits for the button once running again on edits is switched off', async () => {
    const { wrapper } = await mountEditor(defaultScenario(), { withPull: true })
    await settle()
    await wrapper.find('[data-testid="pull-auto"] input').setValue(false)
    await wrapper.find('[data-testid="springs.0.seatForceN"] input').setValue('40')
    await settle(700)
    expect(runs).toHaveLength(1)
    await wrapper.find('[data-testid="run-pull"]').trigger('click')
    await settle()
    expect(runs).toHaveLength(2)
  })
})
