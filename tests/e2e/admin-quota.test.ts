import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_PASSWORD } from '@crackpoint/api'
import { screenshotPath, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * The admin's usage page: sign in through the form, open Usage from the navigation, give a member an own
 * monthly limit, and find it saved (in the database and after a reload). Any console error fails the test.
 */

let harness: Harness
const consoleErrors: string[] = []

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1366, height: 1000 } })
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
})

afterAll(async () => {
  await harness?.close()
})

describe('admin quota', () => {
  it("changes a member's own limit and sees it saved", async () => {
    const { page, baseUrl, knex } = harness
    const builder = await knex('users').where({ email: 'builder@harrowlane.example' }).first<{ id: string; workspace_id: string }>('id', 'workspace_id')
    // The demo shop as seeded: the builder has no limit of their own.
    await knex('quotas').where({ user_id: builder.id }).delete()
    // One pull by the engineer, so the month has usage to show (1 unit).
    const signedIn = await fetch(`${baseUrl}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'Content-Type': 'application/json' },
      body: JSON.stringify({ email: 'engineer@harrowlane.example', password: DEMO_PASSWORD }),
    })
    const { token } = (await signedIn.json()) as { token: string }
    const pull = await fetch(`${baseUrl}/api/scenarios/${harness.scenarioId}/pull`, { method: 'POST', headers: { Authorization: `Bearer ${token}` } })
    expect(pull.status).toBe(200)

    await page.goto(`${baseUrl}/sign-in`)
    // The e-mail field takes the focus once mounted; filling before that would type into whichever field has it.
    await page.locator('input[type="email"]:focus').waitFor()
    await page.getByLabel('E-mail').fill('admin@harrowlane.example')
    await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL(/\/scenarios$/)

    await page.getByRole('link', { name: 'Usage' }).click()
    await page.waitForURL(/\/usage$/)
    await page.getByTestId('member-usage').waitFor()
    expect(await page.getByTestId('workspace-usage').textContent()).toContain('units left of')
    await page.locator('[data-testid="usage-chart"] .main-svg').first().waitFor()

    const field = page.getByLabel('Own limit for Shop builder')
    await field.fill('1500')
    await page.getByTestId(`member-quota-save-${builder.id}`).click()
    await expect.poll(() => page.getByTestId('quota-saved').textContent()).toContain('Limit for Shop builder saved.')

    const row = await knex('quotas').where({ user_id: builder.id }).first<{ monthly_compute_units: string; set_by: string }>()
    expect(Number(row?.monthly_compute_units)).toBe(1500)
    // The table is read again after the save; its row follows a moment later.
    await expect.poll(() => page.getByTestId(`member-row-${builder.id}`).textContent()).toContain('1,500')
    await page.screenshot({ path: screenshotPath('admin-quota-saved.png'), fullPage: true })

    await page.reload()
    await page.getByTestId('member-usage').waitFor()
    await expect.poll(() => page.getByLabel('Own limit for Shop builder').inputValue()).toBe('1500')

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
    await knex('quotas').where({ user_id: builder.id }).delete()
  })
})
