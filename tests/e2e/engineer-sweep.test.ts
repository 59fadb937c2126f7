import { readFileSync } from 'node:fs'
import type { Locator, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * An engineer's sweep in a real browser: a new scenario fed from a CO₂ bottle on the top port, a sweep over
 * the spring seat force, the drive-to-boost ratio and the regulator setpoint, its progress, the heat map
 * with the setpoint cut by a slider, points opened as pulls worked out in the browser, the points table
 * and its CSV. Pictured at
 * a desktop width and a tablet's; any console error fails the test.
 */

const EMAIL = 'engineer@harrowlane.example'

let harness: Harness
const consoleErrors: string[] = []

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
  await signInAs(harness, EMAIL)
})

afterAll(async () => {
  await harness?.close()
})

/** Plotly draws on its next frames; a moment lets a picture show what a user sees. */
async function settle(page: Page): Promise<void> {
  await page.waitForTimeout(600)
}

/**
 * A picture of one part of the page, cut from a full-page capture taken from the top, so the fixed app bar
 * stays at the top of the page instead of across the part.
 */
async function pictureOf(page: Page, part: Locator, name: string): Promise<void> {
  await page.evaluate('window.scrollTo(0, 0)')
  const box = await part.boundingBox()
  if (!box) throw new Error(`nothing to picture for ${name}`)
  await page.screenshot({ path: screenshotPath(name), fullPage: true, clip: box })
}

describe('engineer sweep', () => {
  it('builds a scenario, runs a three-axis sweep, follows it, cuts the heat map and opens a point as a pull', async () => {
    const { page, baseUrl, knex } = harness
    await page.goto(`${baseUrl}/scenarios`)
    await page.getByRole('button', { name: 'New scenario' }).click()
    await page.getByLabel('Name').fill('Sweep check: CO₂ on the top port')
    await page.getByRole('button', { name: 'Create' }).click()
    await page.waitForURL(/\/scenarios\/[0-9a-f-]{36}$/)
    const scenarioId = page.url().split('/').pop()!

    await page.getByTestId('arrangement-top-supply').locator('input').check()
    await expect.poll(() => page.getByTestId('supply.regulatorSetpointPa').isVisible()).toBe(true)
    await page.getByTestId('save').click()
    await expect.poll(() => page.getByText('Version 2', { exact: true }).isVisible()).toBe(true)

    // Axis 1 keeps the seat force (five values), axis 2 the ratio cut to three, axis 3 the setpoint as a list.
    await page.getByTestId('sweep-1-count').locator('input').fill('3')
    await page.getByTestId('sweep-add-axis').click()
    const third = page.getByTestId('sweep-axis-2')
    // A new axis takes the next number a shop tunes most; the picker finds any other by its name.
    const vary = third.getByLabel('Vary')
    await expect.poll(() => vary.inputValue()).toBe('Regulator setpoint')
    await vary.click()
    await page.keyboard.press('Control+A')
    await page.keyboard.type('Regulator droop')
    await page.locator('.v-overlay-container .v-list-item', { hasText: 'Regulator droop' }).first().click()
    await expect.poll(() => vary.inputValue()).toBe('Regulator droop')
    await vary.click()
    await page.keyboard.press('Control+A')
    await page.keyboard.type('setpoint')
    await page.locator('.v-overlay-container .v-list-item', { hasText: 'Regulator setpoint' }).first().click()
    await expect.poll(() => vary.inputValue()).toBe('Regulator setpoint')
    await page.getByTestId('sweep-2-mode-list').click()
    await page.getByTestId('sweep-2-list').locator('input').fill('8; 12')
    await expect.poll(() => page.getByTestId('sweep-2-preview').textContent()).toContain('2 values: 8.0 psi · 12.0 psi')
    await expect.poll(() => page.getByTestId('sweep-point-count').textContent()).toBe('30')
    // Static points cost one compute unit per thousand, rounded up per sweep.
    await expect.poll(() => page.getByTestId('sweep-cost').textContent()).toMatch(/Costs 1 compute unit; [\d,]+ compute units left this month/)
    await pictureOf(page, page.locator('.v-card', { has: page.getByTestId('sweep-summary') }), 'engineer-sweep-builder.png')

    await page.getByTestId('start-sweep').click()
    const progress = page.getByTestId('sweep-progress')
    await expect.poll(() => progress.textContent()).toMatch(/3-axis sweep/)
    await expect.poll(() => progress.textContent(), { timeout: 60_000 }).toMatch(/Done.*30 of 30 points/)

    const sweep = await knex('sweeps').where({ scenario_id: scenarioId }).first<{ state: string; point_count: number; axes: { path: string }[] }>()
    expect(sweep.state).toBe('done')
    expect(sweep.point_count).toBe(30)
    expect(sweep.axes.map((a) => a.path)).toEqual(['springs.0.seatForceN', 'exhaust.ratio', 'supply.regulatorSetpointPa'])

    const heat = page.getByTestId('heat-map-plot')
    await heat.locator('.main-svg').first().waitFor({ timeout: 30_000 })
    // Nothing of the workspace leaves the product through a chart: Plotly's "Share chart" (to its makers' cloud) is off.
    await heat.hover()
    const toolbar = heat.locator('.modebar-btn')
    await toolbar.first().waitFor({ state: 'attached' })
    const titles = await toolbar.evaluateAll((buttons) => buttons.map((b) => b.getAttribute('data-title') ?? ''))
    expect(titles.length).toBeGreaterThan(0)
    expect(titles.filter((t) => /share chart|cloud|chart studio/i.test(t))).toEqual([])
    const slice = page.getByTestId('sweep-slice')
    await expect.poll(() => slice.textContent()).toContain('Cut at Regulator setpoint: 8.0 psi')
    const surfaceAsked = page.waitForResponse((r) => r.url().includes('/surface') && r.url().includes('at='))
    await page.getByTestId('sweep-slice-slider').locator('[role="slider"]').focus()
    await page.keyboard.press('ArrowRight')
    expect((await surfaceAsked).status()).toBe(200)
    await expect.poll(() => slice.textContent()).toContain('Cut at Regulator setpoint: 12.0 psi')

    // Hover reads the cell in the engineer's units.
    await heat.scrollIntoViewIfNeeded()
    const drag = heat.locator('.nsewdrag').first()
    const box = await drag.boundingBox()
    if (!box) throw new Error('the heat map has no plot area')
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2)
    await expect.poll(() => heat.locator('.hoverlayer').textContent()).toMatch(/Crack boost: \d+(\.\d+)? psi/)
    await settle(page)
    await page.screenshot({ path: screenshotPath('engineer-sweep-heat-map.png') })

    // The plot as a picture: PNG and SVG, named after the metric and the cut.
    for (const format of ['png', 'svg'] as const) {
      const saved = page.waitForEvent('download')
      await page.getByTestId(`heatmap-export-${format}`).click()
      const file = await saved
      expect(file.suggestedFilename()).toBe(`crackpoint-sweep-crackBoostPa-cut-2.${format}`)
      const path = await file.path()
      expect(readFileSync(path).subarray(0, 4).toString('latin1')).toBe(format === 'png' ? '\x89PNG' : '<svg')
    }

    await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2)
    const pull = page.getByTestId('point-pull')
    await expect.poll(() => pull.textContent()).toMatch(/Spring seat force .* lbf · Drive-to-boost ratio .* · Regulator setpoint 12\.0 psi/)
    await pull.getByTestId('pull-plots').locator('.main-svg').first().waitFor({ timeout: 30_000 })
    await expect.poll(() => page.getByTestId('point-pull-metrics').textContent(), { timeout: 30_000 }).toContain('Settled boost')

    // The points table: ten a page, sorted on the server by any column, a row opening its own pull.
    const points = page.getByTestId('sweep-points-table')
    await expect.poll(() => points.textContent()).toContain('1-10 of 30')
    const firstCell = () => points.locator('tbody tr').first().locator('td').first().textContent()
    expect(await firstCell()).toBe('1')
    await points.locator('th', { hasText: 'Crack boost' }).first().click()
    await expect.poll(firstCell).not.toBe('1')
    const lowest = await firstCell()
    await points.locator('tbody tr').first().click()
    await expect.poll(() => pull.textContent()).toContain(`Point ${lowest}: its pull`)

    // Every point as CSV, fetched with the token and saved by the browser, in the engineer's units.
    const saved = page.waitForEvent('download')
    await page.getByTestId('sweep-points-csv').click()
    const csv = readFileSync(await (await saved).path(), 'utf8').trim().split(/\r?\n/)
    expect(csv).toHaveLength(31)
    expect(csv[0]).toContain('psi')

    const card = page.locator('.v-card', { has: page.getByTestId('sweep-summary') })
    await page.getByTestId('view-surface').click()
    await page.locator('[data-testid="surface-plot"] canvas').first().waitFor({ timeout: 30_000 })
    await settle(page)
    await pictureOf(page, card, 'engineer-sweep-1280.png')

    await page.setViewportSize({ width: 820, height: 1180 })
    await page.getByTestId('view-heatmap').click()
    await heat.locator('.main-svg').first().waitFor({ timeout: 30_000 })
    await settle(page)
    await pictureOf(page, card, 'engineer-sweep-tablet.png')

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
