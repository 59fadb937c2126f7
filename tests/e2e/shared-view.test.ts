import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { computeBalance, formatQuantity, parseScenario } from '@crackpoint/sim-core'
import { screenshotPath, startHarness, type Harness } from './helpers/browser-harness.ts'
import { apiToken, finishedSweep, shareLink } from './helpers/share-setup.ts'

/**
 * A link holder opens shared links without signing in: a scenario's key figures and its boost over the
 * ratio range, a sweep's surface, and a revoked link's plain "nothing to see". No app navigation shows.
 * Any console or page error fails the test, except the 404 the revoked link is answered with.
 */

let harness: Harness
const consoleErrors: string[] = []
let engineerToken: string

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
  engineerToken = await apiToken(harness, 'engineer@harrowlane.example')
})

afterAll(async () => {
  await harness?.close()
})

describe('shared view', () => {
  it("shows a shared scenario's figures and ratio plot to someone who is not signed in", async () => {
    const { page, baseUrl, knex } = harness
    const link = await shareLink(harness, engineerToken, 'scenario', harness.scenarioId)
    const row = await knex('scenarios').where({ id: harness.scenarioId }).first<{ name: string; data: unknown }>('name', 'data')
    const parsed = parseScenario(row.data)
    if (!parsed.ok) throw new Error('the demo scenario does not parse')
    const crack = computeBalance(parsed.scenario).crack
    if (crack.status !== 'opens') throw new Error('the demo scenario does not crack')

    await page.goto(`${baseUrl}${link.path}`)
    await expect.poll(() => page.getByTestId('shared-title').textContent(), { timeout: 15_000 }).toBe(row.name)
    expect(await page.getByTestId('shared-crack').textContent()).toBe(formatQuantity('pressure', 'us', crack.boostPa))
    expect(await page.getByText('Shared by Harrow Lane Boostworks').count()).toBe(1)
    expect(await page.getByRole('navigation', { name: 'Main navigation' }).count()).toBe(0)
    expect(await page.getByRole('button', { name: 'Sign out' }).count()).toBe(0)
    await page.locator('.js-plotly-plot').first().waitFor({ timeout: 20_000 })
    await page.screenshot({ path: screenshotPath('shared-view-scenario.png'), fullPage: true })

    // The unit switch works without an account.
    await page.getByRole('button', { name: 'Metric units (kPa, mm, N)' }).click()
    expect(await page.getByTestId('shared-crack').textContent()).toBe(formatQuantity('pressure', 'metric', crack.boostPa))
    await page.getByRole('button', { name: 'US units (psi, in, lbf)' }).click()

    const counted = await knex('share_links').where({ id: link.id }).first('use_count', 'last_used_at')
    expect(counted.use_count).toBe(1)
    expect(counted.last_used_at).not.toBeNull()
    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })

  it("shows a shared sweep's state, axes and surface", async () => {
    const { page, baseUrl } = harness
    const sweepId = await finishedSweep(harness, engineerToken, harness.scenarioId)
    const link = await shareLink(harness, engineerToken, 'sweep', sweepId)
    await page.goto(`${baseUrl}${link.path}`)
    await expect.poll(() => page.getByTestId('shared-title').textContent(), { timeout: 15_000 }).toContain('Sweep of')
    expect(await page.getByTestId('shared-sweep-state').textContent()).toContain('Finished: 30 of 30 points')
    await page.getByTestId('surface-plot').locator('.main-svg').first().waitFor({ timeout: 30_000 })
    await page.waitForTimeout(1500)
    await page.screenshot({ path: screenshotPath('shared-view-sweep.png'), fullPage: true })
    await page.getByRole('button', { name: 'Heat map' }).click()
    await page.getByTestId('heat-map-plot').locator('.main-svg').first().waitFor({ timeout: 20_000 })
    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })

  it('says plainly that a revoked link shows nothing', async () => {
    const { page, baseUrl } = harness
    const link = await shareLink(harness, engineerToken, 'scenario', harness.scenarioId)
    const revoked = await fetch(`${baseUrl}/api/share-links/${link.id}`, { method: 'DELETE', headers: { Authorization: `Bearer ${engineerToken}` } })
    expect(revoked.status).toBe(204)
    const before = consoleErrors.length
    await page.goto(`${baseUrl}${link.path}`)
    await expect.poll(() => page.getByTestId('shared-missing').textContent(), { timeout: 15_000 }).toContain('revoked or has expired')
    await page.screenshot({ path: screenshotPath('shared-view-revoked.png') })
    // The browser reports the API's 404 for the revoked link as a failed resource; nothing else may appear.
    expect(consoleErrors.slice(before).every((text) => /status of 404/.test(text))).toBe(true)
    expect(harness.pageErrors).toEqual([])
  })
})
