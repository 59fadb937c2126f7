import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * An engineer fills the hardware library: a wastegate whose picture follows its diameters, and a spring
 * entered from a bench crack test and read as a seat force on that gate; then searches and archives.
 * Pictures at 1280 px and at a tablet's width; any console error fails the test.
 */

let harness: Harness
const consoleErrors: string[] = []

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  await signInAs(harness, 'engineer@harrowlane.example')
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
})

afterAll(async () => {
  await harness?.close()
})

describe('library pages', () => {
  it('adds a wastegate and a bench-tested spring, finds and archives them', async () => {
    const { page, baseUrl } = harness
    await page.goto(`${baseUrl}/library/wastegates`)
    await page.getByTestId('library-table').waitFor()

    await page.getByTestId('new-part').click()
    await page.getByTestId('part-name').locator('input').fill('Harrow Lane 46 mm gate')
    const face = page.getByTestId('area-face')
    await expect.poll(() => face.textContent()).toContain('Ø 1.817 in')
    await page.getByTestId('part-valveDiameterM').locator('input').fill('1.9')
    await expect.poll(() => face.textContent()).toContain('Ø 1.900 in')
    await page.waitForTimeout(400)
    await page.getByTestId('library-form').screenshot({ path: screenshotPath('library-wastegate-form-1280.png') })
    await page.getByTestId('save-part').click()
    await expect.poll(() => page.getByTestId('library-table').textContent()).toContain('Harrow Lane 46 mm gate')

    await page.getByRole('tab', { name: 'Springs' }).click()
    await page.waitForURL(/\/library\/springs$/)
    await page.getByTestId('new-part').click()
    await page.getByTestId('part-name').locator('input').fill('Bench-tested blue spring')
    await page.getByTestId('part-shape').getByLabel('Bench crack test').check()
    await page.getByTestId('part-benchCrackPressurePa').locator('input').fill('0')
    await expect.poll(() => page.getByTestId('library-form').textContent()).toContain('Must be greater than 0.0 psi')
    await page.getByTestId('part-benchCrackPressurePa').locator('input').fill('8')
    await expect.poll(() => page.getByTestId('bench-result').textContent()).toMatch(/seat force of \d+(\.\d)? lbf/)
    await page.waitForTimeout(400)
    await page.getByTestId('library-form').screenshot({ path: screenshotPath('library-spring-form-1280.png') })
    await page.getByTestId('save-part').click()
    await expect.poll(() => page.getByTestId('library-table').textContent()).toContain('Bench-tested blue spring')

    await page.getByTestId('library-search').locator('input').fill('blue')
    await expect.poll(() => page.getByTestId('library-table').textContent()).toContain('1-1 of 1')
    await page.evaluate('window.scrollTo(0, 0)')
    await page.screenshot({ path: screenshotPath('library-1280.png'), fullPage: true })

    await page.getByTestId('archive-Bench-tested blue spring').click()
    await expect.poll(() => page.getByTestId('library-table').textContent()).toContain('No springs match')

    await page.setViewportSize({ width: 820, height: 1180 })
    await page.getByRole('tab', { name: 'Wastegates' }).click()
    await expect.poll(() => page.getByTestId('library-table').textContent()).toContain('Harrow Lane 46 mm gate')
    await page.waitForTimeout(300)
    await page.screenshot({ path: screenshotPath('library-820.png'), fullPage: true })
    await page.getByText('Harrow Lane 46 mm gate').click()
    await page.getByTestId('library-form').waitFor()
    await page.waitForTimeout(300)
    await page.screenshot({ path: screenshotPath('library-wastegate-form-820.png') })

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
