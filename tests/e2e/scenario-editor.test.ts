import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshotPath, signInAs, startHarness, type Harness, createScenario } from './helpers/browser-harness.ts'
import { defaultScenario } from '@crackpoint/sim-core'

/**
 * The scenario editor at a desktop width and at a tablet's: a CO₂ bottle on the top port, a nested spring
 * from a bench test, and the live balance beside them. Each width is saved as a picture to look at.
 */

let harness: Harness
let scenarioId: string

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  const token = await signInAs(harness, 'engineer@harrowlane.example')
  scenarioId = await createScenario(harness, token, 'Editor check: CO₂ on the top port', defaultScenario())
})

afterAll(async () => {
  await harness?.close()
})

describe('scenario editor', () => {
  it('switches to a CO₂-fed top port and a bench-tested nested spring, at desktop and tablet widths', async () => {
    const { page, baseUrl } = harness
    await page.goto(`${baseUrl}/scenarios/${scenarioId}`)
    await page.getByTestId('crack-boost').waitFor()

    await page.getByTestId('arrangement-top-supply').locator('input').check()
    await page.getByTestId('gas-caution').first().waitFor()
    await expect.poll(() => page.getByTestId('supply.regulatorSetpointPa').isVisible()).toBe(true)

    await page.getByTestId('add-spring').click()
    await page.getByTestId('spring-1').getByLabel('Bench crack pressure').check()
    await page.getByTestId('springs.1.benchCrackPressurePa').locator('input').fill('10')
    await expect.poll(() => page.getByTestId('bench-seat-force-1').textContent()).toMatch(/seat force of \d/)

    await page.getByTestId('areas-picture').screenshot({ path: screenshotPath('areas-picture.png') })
    await page.locator('[data-testid="ratio-plot"] .main-svg').first().waitFor()
    // Tall enough that the balance column needs no scrolling of its own for the picture.
    await page.setViewportSize({ width: 1280, height: 1500 })
    await page.locator('.balance-panel').screenshot({ path: screenshotPath('balance-panel.png') })
    await page.setViewportSize({ width: 1280, height: 900 })
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('scenario-editor-1280.png'), fullPage: true })

    await page.setViewportSize({ width: 820, height: 1180 })
    await page.waitForTimeout(300)
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('scenario-editor-820.png'), fullPage: true })
    expect(harness.pageErrors).toEqual([])
  })
})
