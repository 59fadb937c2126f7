import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { defaultScenario, formatQuantity, parseScenario, solveForTarget } from '@crackpoint/sim-core'
import { createScenario, screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * A builder asks for a boost rather than a spring: 20 psi of crack boost at a drive-to-boost ratio somewhere in
 * 1.4–1.8 with CO₂ on the top port. The page answers with a regulator setpoint, the builder puts it in, saves, and
 * the setup sheet says what the scenario was set up for.
 */

let harness: Harness
let scenarioId: string
const base = defaultScenario()
const data = { ...base, control: { kind: 'both' }, supply: { kind: 'co2', regulatorSetpointPa: 68_948 } }

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  const token = await signInAs(harness, 'builder@harrowlane.example')
  scenarioId = await createScenario(harness, token, 'Builder’s street car, CO₂ on the top', data)
})

afterAll(async () => {
  await harness?.close()
})

describe('boost wanted', () => {
  it('solves for the setpoint over a ratio band, puts it in, and the setup sheet says what it was set up for', async () => {
    const { page, baseUrl, context } = harness
    const parsed = parseScenario(data)
    if (!parsed.ok) throw new Error('the scenario is not valid')
    const expected = solveForTarget(parsed.scenario, { unknown: 'setpoint', target: 'crack', targetBoostPa: 137_895, ratioBand: [1.4, 1.8] })
    if (expected.status !== 'solved') throw new Error('20 psi should be reachable on CO₂')

    await page.goto(`${baseUrl}/scenarios/${scenarioId}`)
    const panel = page.getByTestId('target-panel')
    await panel.waitFor()
    await panel.scrollIntoViewIfNeeded()
    await page.getByTestId('target-boost').locator('input').fill('20')
    await expect.poll(async () => (await page.getByTestId('target-value').textContent())?.trim()).toBe(`Regulator setpoint: ${formatQuantity('pressure', 'us', expected.value)}`)
    expect(await page.getByTestId('target-band').locator('tbody tr').count()).toBe(2)
    await panel.screenshot({ path: screenshotPath('boost-wanted-1280.png') })

    await page.getByTestId('target-apply').click()
    await expect.poll(() => page.getByTestId('supply.regulatorSetpointPa').locator('input').inputValue()).toBe(
      formatQuantity('pressure', 'us', expected.value).replace(' psi', ''),
    )
    await page.getByTestId('save').click()
    await expect.poll(() => page.getByTestId('save').isDisabled()).toBe(true)

    const [sheet] = await Promise.all([context.waitForEvent('page'), page.getByTestId('open-sheet').click()])
    await sheet.getByTestId('setup-sheet').waitFor()
    await expect.poll(() => sheet.getByTestId('setup-sheet').textContent()).toContain('Set up for20.0 psi of crack boost, over 1.40–1.80 : 1')
    const text = (await sheet.getByTestId('setup-sheet').textContent()) ?? ''
    expect(text).toContain('Chosen by solving forthe regulator setpoint')
    expect(text).toContain(`Regulator setpoint${formatQuantity('pressure', 'us', expected.value)}`)
    await sheet.screenshot({ path: screenshotPath('setup-sheet-boost-wanted.png'), fullPage: true })
    expect(harness.pageErrors).toEqual([])
  })
})
