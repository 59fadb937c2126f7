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
    // The pull runs in a worker from the edited draft; its plots share one time axis.
    await page.locator('[data-testid="pull-plots"] .main-svg').first().waitFor({ timeout: 30_000 })
    await expect.poll(() => page.getByTestId('pull-status').textContent(), { timeout: 30_000 }).toBe('')
    expect(await page.getByTestId('pull-metrics').textContent()).toContain('Pulls per bottle')
    // Tall enough that the whole pull card is in view under the app bar for its picture.
    await page.setViewportSize({ width: 1280, height: 1500 })
    const plots = page.getByTestId('pull-plots')
    await plots.scrollIntoViewIfNeeded()
    await page.evaluate(() => window.scrollBy(0, -80))
    const box = await plots.boundingBox()
    if (!box) throw new Error('the pull plots have no box')
    await page.mouse.move(box.x + box.width * 0.6, box.y + box.height * 0.3)
    // One hover names every series at that instant, across all the stacked plots.
    const hover = page.locator('[data-testid="pull-plots"] .hoverlayer')
    await expect.poll(() => hover.textContent(), { timeout: 5_000 }).toContain('Shaft speed')
    expect(await hover.textContent()).toContain('Boost')
    await page.locator('.v-card', { has: page.getByTestId('pull-plots') }).screenshot({ path: screenshotPath('pull-panel.png') })
    await page.setViewportSize({ width: 1280, height: 900 })

    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('scenario-editor-1280.png'), fullPage: true })

    // The dark theme for a dim workshop: the drawing and the plots follow it.
    await page.getByRole('button', { name: 'Use the dark theme' }).click()
    await page.waitForTimeout(300)
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('scenario-editor-1280-dark.png') })
    await page.getByRole('button', { name: 'Use the light theme' }).click()

    await page.setViewportSize({ width: 820, height: 1180 })
    await page.waitForTimeout(300)
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('scenario-editor-820.png'), fullPage: true })
    await page.screenshot({ path: screenshotPath('scenario-editor-820-top.png') })
    expect(harness.pageErrors).toEqual([])
  })
})
