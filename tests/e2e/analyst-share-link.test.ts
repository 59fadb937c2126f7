import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'
import { apiToken, finishedSweep } from './helpers/share-setup.ts'
import { linkIn, waitForMail } from '../api/helpers/caught-mail.ts'

/**
 * The analyst's main path: open a scenario whose sweep has finished, make a read-only link to the sweep
 * from the sweep panel, copy its address, send it to a customer by e-mail, and find the link listed.
 * Any console or page error fails the test.
 */

let harness: Harness
const consoleErrors: string[] = []
let sweepId: string

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1366, height: 1000 } })
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
  // Analysts do not compute: the engineer ran the sweep the analyst shares.
  sweepId = await finishedSweep(harness, await apiToken(harness, 'engineer@harrowlane.example'), harness.scenarioId)
})

afterAll(async () => {
  await harness?.close()
})

describe('analyst shares a sweep', () => {
  it('makes a link from the sweep panel, e-mails it and sees it listed', async () => {
    const { page, baseUrl, knex } = harness
    await signInAs(harness, 'analyst@harrowlane.example')
    await page.goto(`${baseUrl}/scenarios/${harness.scenarioId}`)
    const share = page.getByTestId('share-sweep')
    await share.waitFor({ timeout: 30_000 })
    await page.getByTestId('sweep-progress').scrollIntoViewIfNeeded()
    await share.click()

    const dialog = page.getByRole('dialog')
    await dialog.getByLabel('Label (who it is for)').fill('Harrow Lane customer: Saturday track day')
    await dialog.locator('.v-select').filter({ hasText: 'Works for' }).locator('.v-field').click()
    await page.getByRole('option', { name: '30 days' }).click()
    await dialog.getByTestId('share-create').click()
    const url = dialog.getByTestId('share-url').locator('input')
    await expect.poll(() => url.inputValue(), { timeout: 10_000 }).toMatch(/\/shared\/[A-Za-z0-9_-]{43}$/)
    const address = await url.inputValue()
    const code = address.split('/').pop() ?? ''

    const row = await knex('share_links').where({ sweep_id: sweepId }).orderBy('created_at', 'desc').first()
    expect(row.target).toBe('sweep')
    expect(row.label).toBe('Harrow Lane customer: Saturday track day')
    expect((new Date(row.expires_at).getTime() - Date.now()) / 86_400_000).toBeGreaterThan(29.9)
    const analyst = await knex('users').where({ email: 'analyst@harrowlane.example' }).first('id')
    expect(row.created_by).toBe(analyst.id)
    expect(JSON.stringify(row)).not.toContain(code)

    const customer = `track.day.${Date.now()}@customer.example`
    await dialog.getByLabel('Send to e-mail').fill(customer)
    await dialog.getByLabel('Note (optional)').fill('The spring we talked about, over the whole ratio range.')
    await dialog.getByTestId('share-send').click()
    await expect.poll(() => dialog.getByTestId('share-sent').textContent(), { timeout: 10_000 }).toContain(customer)
    const mail = await waitForMail(customer)
    expect(mail.text).toContain('The spring we talked about')
    expect(linkIn(mail, 'http').endsWith(`/shared/${code}`)).toBe(true)

    await expect.poll(() => dialog.getByTestId('share-list').textContent()).toContain('Harrow Lane customer: Saturday track day')
    expect(await dialog.getByTestId('share-list').textContent()).toContain('Active')
    await page.screenshot({ path: screenshotPath('analyst-share-link-dialog.png') })

    // The link opens for someone who is not signed in.
    const holder = await harness.context.newPage()
    await holder.goto(`${baseUrl}/shared/${code}`)
    await expect.poll(() => holder.getByTestId('shared-title').textContent(), { timeout: 15_000 }).toContain('Sweep of')
    await holder.close()

    // Closing the dialog forgets the code: opening it again lists the link but cannot show its address.
    await dialog.getByRole('button', { name: 'Close' }).click()
    await share.click()
    await expect.poll(() => page.getByRole('dialog').getByTestId('share-list').textContent()).toContain('Harrow Lane customer')
    expect(await page.getByRole('dialog').getByTestId('share-created').count()).toBe(0)
    await page.getByRole('dialog').getByRole('button', { name: 'Close' }).click()

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
