import type { Knex } from 'knex'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_PASSWORD } from '@crackpoint/api'
import { computeBalance, formatQuantity, fromDisplay, getAtPath, parseScenario, setAtPath, toDisplay, type UnitSystem } from '@crackpoint/sim-core'
import { screenshotPath, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * The thin path in a real browser: sign in, open the demo scenario, read the live balance, change the
 * spring and save, run a sweep on the queue, and see its surface. The API, the worker and the built web
 * app run in this process against the PostgreSQL and Redis that `npm test` provides.
 */

const EMAIL = 'engineer@harrowlane.example'
/** Seat forces to type, in the unit system of the engineer's profile; the one that differs from the saved spring is used. */
const SEAT_FORCE_CHOICES = { us: [35, 33], metric: [155, 145] } as const

let harness: Harness
let knex: Knex
let page: Page
let baseUrl: string
let scenarioId: string

beforeAll(async () => {
  harness = await startHarness()
  ;({ knex, page, baseUrl, scenarioId } = harness)
})

afterAll(async () => {
  await harness?.close()
})

/** What the balance panel must show for `data`, worked out here with the same sim-core. */
function expectedCrack(data: unknown, system: UnitSystem): string {
  const parsed = parseScenario(data)
  if (!parsed.ok) throw new Error(`the demo scenario is not valid: ${JSON.stringify(parsed.issues)}`)
  const crack = computeBalance(parsed.scenario).crack
  if (crack.status !== 'opens') throw new Error(`the demo scenario does not crack under boost (${crack.status})`)
  return formatQuantity('pressure', system, crack.boostPa)
}

describe('thin path', () => {
  it('signs in, edits the demo scenario with a live balance, saves, sweeps and shows the surface', async () => {
    const row = await knex('scenarios').where({ id: scenarioId }).first<{ name: string; data: unknown; version: number }>()
    const user = await knex('users').where({ email: EMAIL }).first<{ unit_system: UnitSystem }>()
    expect(row).toBeDefined()
    const system = user.unit_system

    await page.goto(`${baseUrl}/`)
    await page.waitForURL(/\/sign-in/)
    // The e-mail field takes the focus once mounted; filling before that would type into whichever field has it.
    await page.locator('input[type="email"]:focus').waitFor()
    await page.getByLabel('E-mail').fill(EMAIL)
    await page.getByLabel('Password', { exact: true }).fill('not-the-password')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await expect.poll(() => page.getByTestId('sign-in-error').textContent()).toContain('E-mail or password is not right.')

    await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL(/\/scenarios$/)
    await expect.poll(() => page.getByTestId('signed-in-user').textContent()).toContain('Harrow Lane Boostworks')

    await page.getByRole('link', { name: row.name }).first().click()
    await page.waitForURL(new RegExp(`/scenarios/${scenarioId}$`))
    const crack = page.getByTestId('crack-boost')
    await expect.poll(() => crack.textContent()).toContain(expectedCrack(row.data, system))

    // Typing a new seat force moves the crack boost at once, before anything is saved.
    const savedSeat = getAtPath(row.data, 'springs.0.seatForceN')
    expect(typeof savedSeat).toBe('number')
    const shownSeat = Math.round(toDisplay('force', system, savedSeat as number))
    const typed = SEAT_FORCE_CHOICES[system].find((value) => value !== shownSeat) ?? SEAT_FORCE_CHOICES[system][0]
    const seatForceN = fromDisplay('force', system, typed)
    const edited = setAtPath(row.data, 'springs.0.seatForceN', seatForceN)
    await page.getByTestId('springs.0.seatForceN').locator('input').fill(String(typed))
    await expect.poll(() => crack.textContent()).toContain(expectedCrack(edited, system))
    await expect.poll(() => page.getByTestId('unsaved').isVisible()).toBe(true)

    await page.getByTestId('save').click()
    await expect.poll(() => page.getByText(`Version ${row.version + 1}`, { exact: true }).isVisible()).toBe(true)
    const saved = await knex('scenarios').where({ id: scenarioId }).first<{ version: number; data: { springs: { seatForceN: number }[] } }>()
    expect(saved.version).toBe(row.version + 1)
    expect(saved.data.springs[0]?.seatForceN).toBeCloseTo(seatForceN, 6)

    const start = page.getByTestId('start-sweep')
    await expect.poll(() => start.isEnabled()).toBe(true)
    await start.click()
    const progress = page.getByTestId('sweep-progress')
    await expect.poll(() => progress.textContent(), { timeout: 60_000 }).toMatch(/Done[\s\S]*25 of 25 points/)
    await page.locator('[data-testid="heat-map-plot"] .main-svg').first().waitFor({ timeout: 60_000 })
    await page.getByTestId('view-surface').click()
    await page.locator('[data-testid="surface-plot"] .main-svg').first().waitFor({ timeout: 60_000 })
    await page.locator('[data-testid="surface-plot"] canvas').first().waitFor({ timeout: 30_000 })
    // Every point of this range cracks under boost, so the surface must have no gaps.
    expect(await page.getByText('Gaps are points with no value').count()).toBe(0)
    // Plotly draws the surface on its next frames; give it a moment before the picture. From the top of the
    // page, so the fixed app bar and drawer sit where a user sees them in the full-page capture.
    await page.evaluate('window.scrollTo(0, 0)')
    await page.waitForTimeout(500)

    await page.screenshot({ path: screenshotPath('thin-path.png'), fullPage: true })
    expect(harness.pageErrors).toEqual([])
  })
})
