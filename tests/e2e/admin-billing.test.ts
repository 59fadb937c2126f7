import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { loadConfig } from '@crackpoint/api'
import { screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * An admin buys a pack of compute units: the Billing page, the payment stand-in's own checkout page (in
 * place of Stripe's), back to the app, and the purchase shown as credited once the stand-in's signed webhook
 * has reached the API. Any console error fails the test.
 */

let harness: Harness
let unregister: (() => Promise<void>) | undefined
const consoleErrors: string[] = []
const standInBase = (() => {
  const { protocol, host, port } = loadConfig({ ...process.env, NODE_ENV: 'test' }).stripe
  return `${protocol}://${host}:${port}`
})()

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  harness.page.on('console', (message) => {
    if (message.type() === 'error') consoleErrors.push(message.text())
  })
  // The stand-in sends its events to this run's API, which listens on a port of its own.
  const registered = await fetch(`${standInBase}/_fake/webhook-endpoints`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ url: `${harness.baseUrl}/api/billing/webhook` }),
  })
  if (registered.status !== 201) throw new Error(`the payment stand-in answered ${registered.status}`)
  const { id } = (await registered.json()) as { id: string }
  unregister = async () => {
    await fetch(`${standInBase}/_fake/webhook-endpoints/${id}`, { method: 'DELETE' })
  }
})

afterAll(async () => {
  await unregister?.()
  await harness?.close()
})

describe('buying compute', () => {
  it("takes an admin from the Billing page through the provider's checkout and back to the units credited", async () => {
    const { page, baseUrl, knex } = harness
    await signInAs(harness, 'admin@harrowlane.example')
    const workspaceId = (await knex('workspaces').where({ name: 'Harrow Lane Boostworks' }).first<{ id: string }>()).id
    const ledgerBefore = await knex('usage_ledger').where({ workspace_id: workspaceId, kind: 'purchase' }).count<{ count: string }[]>('* as count')

    await page.goto(`${baseUrl}/scenarios`)
    await page.getByRole('link', { name: 'Billing' }).click()
    await page.waitForURL(`${baseUrl}/billing`)
    await page.getByTestId('pack-units-50k').waitFor()
    expect(await page.getByTestId('pack-units-50k').textContent()).toContain('$79.00')

    await page.getByRole('button', { name: 'Buy 50,000 compute units for $79.00' }).click()
    await page.waitForURL(new RegExp(`^${standInBase}/pay/cs_test_`))
    expect(await page.getByTestId('checkout-total').textContent()).toBe('$79.00')
    expect(await page.getByRole('note').textContent()).toContain('local stand-in')
    await page.screenshot({ path: screenshotPath('admin-billing-checkout.png'), fullPage: true })

    await page.getByRole('button', { name: 'Pay $79.00' }).click()
    await page.waitForURL(new RegExp(`^${baseUrl}/billing\\?purchase=`))
    await page.getByTestId('billing-credited').waitFor({ timeout: 20_000 })
    expect(await page.getByTestId('billing-credited').textContent()).toContain('50,000 compute units were added to this month for $79.00')
    const history = page.getByTestId('purchase-history')
    await expect.poll(() => history.textContent()).toContain('Credited')
    await page.screenshot({ path: screenshotPath('admin-billing-credited.png'), fullPage: true })

    const purchaseId = new URL(page.url()).searchParams.get('purchase')
    const purchase = await knex('purchases').where({ id: purchaseId }).first<{ state: string; checkout_session_id: string }>()
    expect(purchase.state).toBe('paid')
    const credited = await knex('usage_ledger').where({ external_ref: purchase.checkout_session_id })
    expect(credited).toHaveLength(1)
    expect(credited[0]).toMatchObject({ kind: 'purchase', compute_units: '50000', workspace_id: workspaceId })
    const ledgerAfter = await knex('usage_ledger').where({ workspace_id: workspaceId, kind: 'purchase' }).count<{ count: string }[]>('* as count')
    expect(Number(ledgerAfter[0]?.count)).toBe(Number(ledgerBefore[0]?.count) + 1)

    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })

  it('shows no Billing entry to an engineer, and the page tells them who can buy', async () => {
    const { page, baseUrl } = harness
    await signInAs(harness, 'engineer@harrowlane.example')
    await page.goto(`${baseUrl}/scenarios`)
    await page.getByRole('link', { name: 'Scenarios' }).waitFor()
    expect(await page.getByRole('link', { name: 'Billing' }).count()).toBe(0)
    await page.goto(`${baseUrl}/billing`)
    expect(await page.getByTestId('billing-admins-only').textContent()).toContain('Only a workspace admin can buy compute')
    expect(harness.pageErrors).toEqual([])
    expect(consoleErrors).toEqual([])
  })
})
