import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'
import { linkIn, waitForMail } from '../api/helpers/caught-mail.ts'

/**
 * The admin invites a new engineer from the team page; the invited person opens the e-mailed link, joins
 * and lands signed in. Then they forget their password, ask for a link from the sign-in page and set a new
 * one from the e-mail. Any console or page error fails the test.
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

/** The e-mailed link with the harness's own address in place of PUBLIC_URL's. */
function localPath(link: string): string {
  return new URL(link).pathname
}

describe('team invitation and password reset', () => {
  it('invites from the team page, joins from the e-mail, and resets the password from the sign-in page', async () => {
    const { page, baseUrl, knex } = harness
    const invitee = `wren.${Date.now()}@harrowlane.example`
    await signInAs(harness, 'admin@harrowlane.example')
    await page.goto(`${baseUrl}/team`)
    await page.getByTestId('members-table').waitFor()
    await page.getByLabel('E-mail to invite').fill(invitee)
    await page.getByTestId('invite-send').click()
    await expect.poll(() => page.getByTestId('invitations-table').textContent(), { timeout: 10_000 }).toContain(invitee)
    expect(await page.getByTestId('invitations-table').textContent()).toContain('Waiting')
    await page.screenshot({ path: screenshotPath('admin-team.png'), fullPage: true })

    const invitation = await waitForMail(invitee)
    expect(invitation.subject).toContain('Harrow Lane Boostworks')
    await page.evaluate(() => localStorage.removeItem('crackpoint.token'))
    await page.goto(`${baseUrl}${localPath(linkIn(invitation, 'http'))}`)
    await expect.poll(() => page.getByTestId('invitation-facts').textContent(), { timeout: 10_000 }).toContain(invitee)
    // The name field takes focus on its own once mounted; typing before that can land in the wrong field on a busy
    // machine, so wait for it as a person would.
    await expect.poll(() => page.evaluate(() => document.activeElement?.getAttribute('autocomplete'))).toBe('name')
    await page.getByLabel('Your name').fill('Wren Okafor')
    await page.getByLabel('Choose a password').fill('spring seat forty two')
    expect(await page.getByLabel('Your name').inputValue()).toBe('Wren Okafor')
    await page.screenshot({ path: screenshotPath('accept-invitation.png') })
    await page.getByRole('button', { name: /^Join / }).click()
    await page.waitForURL(/\/scenarios$/)
    await expect.poll(() => page.getByTestId('signed-in-user').textContent()).toContain('Wren Okafor')
    const member = await knex('users').where({ email: invitee }).first('role')
    expect(member.role).toBe('engineer')

    await page.getByRole('button', { name: 'Sign out' }).click()
    await page.waitForURL(/\/sign-in/)
    // The e-mail field takes the focus once mounted; filling before that would type into whichever field has it.
    await page.locator('input[type="email"]:focus').waitFor()
    await page.getByLabel('E-mail').fill(invitee)
    await page.getByTestId('forgot-password').click()
    await page.getByTestId('send-reset').click()
    await expect.poll(() => page.getByTestId('reset-requested').textContent(), { timeout: 10_000 }).toContain('If an account uses this e-mail')
    await page.screenshot({ path: screenshotPath('forgot-password.png') })
    await page.getByRole('button', { name: 'Close' }).click()

    const reset = await waitForMail(invitee, 2)
    await page.goto(`${baseUrl}${localPath(linkIn(reset, 'http'))}`)
    // The new-password field takes the focus once mounted; filling the repeat before that would lose it.
    await page.locator('[data-testid="reset-new"] input:focus').waitFor()
    await page.getByTestId('reset-new').locator('input').fill('a brand new secret')
    await page.getByTestId('reset-repeat').locator('input').fill('a brand new secret')
    expect(await page.getByTestId('reset-repeat').locator('input').inputValue()).toBe('a brand new secret')
    await page.screenshot({ path: screenshotPath('reset-password.png') })
    await page.getByRole('button', { name: 'Set the new password' }).click()
    await page.waitForURL(/\/scenarios$/)
    await expect.poll(() => page.getByTestId('signed-in-user').textContent()).toContain('Wren Okafor')

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
