import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { defaultScenario, scenarioSchema } from '@crackpoint/sim-core'
import { DEMO_PASSWORD } from '@crackpoint/api'
import { createScenario, screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * A builder signs in, opens Compare, puts two scenarios side by side and runs the ready comparison of a
 * CO₂ bottle against a compressor and tank on one of them: two pulls in the browser's worker. Pictures at
 * 1280 px and at a tablet's width; any console error fails the test.
 */

let harness: Harness
const consoleErrors: string[] = []

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  const token = await signInAs(harness, 'builder@harrowlane.example')
  const both = scenarioSchema.parse({
    ...defaultScenario(),
    control: { kind: 'both' },
    supply: { kind: 'co2', regulatorSetpointPa: 68_948 },
  })
  await createScenario(harness, token, 'Street car, bottle on the top port', both)
  await createScenario(harness, token, 'Track car, stiffer spring', scenarioSchema.parse({ ...both, springs: [{ from: 'seat', seatForceN: 200, rateNPerM: 3500 }] }))
  await harness.page.evaluate(() => localStorage.clear())
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
})

afterAll(async () => {
  await harness?.close()
})

describe('builder: CO₂ bottle against compressor and tank', () => {
  it('signs in, compares two scenarios and runs both supplies on one', async () => {
    const { page, baseUrl } = harness
    await page.goto(`${baseUrl}/sign-in`)
    // The e-mail field takes the focus once mounted; filling before that would type into whichever field has it.
    await page.locator('input[type="email"]:focus').waitFor()
    await page.getByLabel('E-mail').fill('builder@harrowlane.example')
    await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL(/\/scenarios$/)

    await page.getByRole('link', { name: 'Compare' }).click()
    await page.waitForURL(/\/compare$/)
    await page.getByTestId('compare-hint').waitFor()

    await page.getByTestId('compare-pick').click()
    await page.getByRole('option', { name: 'Street car, bottle on the top port' }).click()
    await page.getByRole('option', { name: 'Track car, stiffer spring' }).click()
    await page.keyboard.press('Escape')
    // The picker's list closes with a transition; until it has gone its options are still on the page.
    await page.getByRole('listbox').waitFor({ state: 'detached' })
    await page.getByTestId('compare-table').waitFor()
    expect(await page.getByTestId('compare-crack-0').textContent()).toMatch(/\d+(\.\d)? psi/)
    await page.locator('[data-testid="compare-ratio-plot"] .main-svg').first().waitFor()

    await page.getByTestId('supply-scenario').click()
    await page.getByRole('listbox').getByRole('option', { name: 'Street car, bottle on the top port' }).click()
    await expect.poll(async () => page.getByTestId('supply-setpoint').locator('input').inputValue()).toBe('10')
    await page.getByTestId('tank-cutInPa').locator('input').fill('110')
    await page.getByTestId('run-supply-comparison').click()
    await page.getByTestId('supply-results').waitFor({ timeout: 60_000 })
    await expect.poll(() => page.getByTestId('supply-recovery-1').textContent(), { timeout: 60_000 }).not.toBe('—')

    expect(await page.getByTestId('supply-held-0').textContent()).toMatch(/psi/)
    expect(await page.getByTestId('supply-held-1').textContent()).toMatch(/psi/)
    expect(await page.getByTestId('supply-gas-0').textContent()).toMatch(/lb/)
    expect(await page.getByTestId('supply-pulls-0').textContent()).toMatch(/per full bottle/)
    expect(await page.getByTestId('supply-pulls-1').textContent()).toMatch(/back to back|keeps up/)
    expect(await page.getByTestId('supply-recovery-0').textContent()).toContain('swap or refill the bottle')
    expect(await page.getByTestId('gas-caution').first().textContent()).toContain('high pressure')

    // Tall enough that the whole comparison card is in view under the app bar for its picture.
    await page.setViewportSize({ width: 1280, height: 1500 })
    await page.getByTestId('supply-comparison').scrollIntoViewIfNeeded()
    await page.evaluate(() => window.scrollBy(0, -80))
    await page.getByTestId('supply-comparison').screenshot({ path: screenshotPath('supply-comparison-1280.png') })
    await page.setViewportSize({ width: 1280, height: 900 })
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('compare-1280.png'), fullPage: true })

    await page.setViewportSize({ width: 820, height: 1180 })
    await page.waitForTimeout(400)
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('compare-820.png'), fullPage: true })

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
