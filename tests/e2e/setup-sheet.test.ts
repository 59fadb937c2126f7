import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { computeBalance, defaultScenario, formatQuantity, parseScenario } from '@crackpoint/sim-core'
import { createScenario, screenshotPath, signInAs, startHarness, type Harness } from './helpers/browser-harness.ts'

/**
 * The setup sheet from the scenario page: it opens in a tab of its own, reads the saved scenario, and its
 * print stylesheet gives one page on A4 and on US Letter with nothing of the app around it.
 */

let harness: Harness
let scenarioId: string

/** Twin gates with a nested bench-tested spring, boost on the bottom and a CO₂ bottle on the top port. */
const base = defaultScenario()
const data = {
  ...base,
  wastegate: { ...base.wastegate, count: 2 },
  springs: [base.springs[0], { from: 'bench', benchCrackPressurePa: 34_474, rateNPerM: 1751 }],
  control: { kind: 'both' },
  supply: { kind: 'co2', regulatorSetpointPa: 55_158 },
}

/**
 * The longest sheet there is: three springs, a closed loop with its gains, a compressor with its tank, a
 * restricted dump, drive pressure at zero boost, and a boost limit under full open (one more warning line).
 */
const longest = {
  ...base,
  springs: [
    base.springs[0],
    { from: 'bench', benchCrackPressurePa: 20_684, rateNPerM: 1751 },
    { from: 'seat', seatForceN: 22, rateNPerM: 900 },
  ],
  control: { kind: 'closed-loop', targetBoostPa: 103_421, dutyMin: 0.1, dutyMax: 0.9 },
  supply: { kind: 'compressor', regulatorSetpointPa: 68_948 },
  exhaust: { ratio: 1.6, driveAtZeroBoostPa: 5_000, downstream: { kind: 'restricted', coefficientPaPerKg2S2: 1e6 } },
  boostLimitPa: 90_000,
}
let longestId: string

/** Pages in a PDF that Chromium printed: each page is one `/Type /Page` object. */
function pageCount(pdf: Buffer): number {
  return pdf.toString('latin1').match(/\/Type\s*\/Page(?![a-z])/g)?.length ?? 0
}

beforeAll(async () => {
  harness = await startHarness({ viewport: { width: 1280, height: 900 } })
  const token = await signInAs(harness, 'engineer@harrowlane.example')
  scenarioId = await createScenario(harness, token, 'Harrow Lane twin gates, CO₂ on the top', data)
  longestId = await createScenario(harness, token, 'Harrow Lane drag car: three springs, closed loop on a compressor tank', longest)
})

afterAll(async () => {
  await harness?.close()
})

describe('setup sheet', () => {
  it('opens from the scenario page and prints on one page without the app around it', async () => {
    const { page, baseUrl, context } = harness
    const parsed = parseScenario(data)
    if (!parsed.ok) throw new Error(`the sheet's scenario is not valid: ${JSON.stringify(parsed.issues)}`)
    const crack = computeBalance(parsed.scenario).crack
    if (crack.status !== 'opens') throw new Error(`the sheet's scenario does not crack (${crack.status})`)

    await page.goto(`${baseUrl}/scenarios/${scenarioId}`)
    await page.getByTestId('crack-boost').waitFor()
    const [sheet] = await Promise.all([context.waitForEvent('page'), page.getByTestId('open-sheet').click()])
    await sheet.waitForURL(new RegExp(`/scenarios/${scenarioId}/sheet$`))
    await sheet.getByTestId('setup-sheet').waitFor()

    await expect.poll(() => sheet.getByTestId('sheet-shop').textContent()).toBe('Harrow Lane Boostworks')
    expect(await sheet.getByTestId('sheet-crack').textContent()).toBe(formatQuantity('pressure', 'us', crack.boostPa))
    expect(await sheet.getByTestId('sheet-cautions').textContent()).toContain('holds gas at high pressure')
    expect(await sheet.getByTestId('sheet-ratio-table').locator('tbody tr').count()).toBe(11)
    expect(await sheet.title()).toBe('Setup sheet · Crackpoint')

    await sheet.setViewportSize({ width: 820, height: 1180 })
    await sheet.screenshot({ path: screenshotPath('setup-sheet-screen-820.png'), fullPage: true })
    await sheet.setViewportSize({ width: 1280, height: 900 })
    await sheet.screenshot({ path: screenshotPath('setup-sheet-screen-1280.png'), fullPage: true })

    // The printable width of A4 inside the sheet's 12 mm margins, at the 96 px per inch of CSS: 186 mm = 703 px.
    await sheet.setViewportSize({ width: 703, height: 960 })
    await sheet.emulateMedia({ media: 'print' })
    expect(await sheet.getByTestId('print-sheet').isVisible()).toBe(false)
    await sheet.screenshot({ path: screenshotPath('setup-sheet.png'), fullPage: true })

    for (const format of ['A4', 'Letter'] as const) {
      const pdf = await sheet.pdf({ format, printBackground: true })
      expect(pageCount(pdf), `pages on ${format}`).toBe(1)
    }

    await sheet.emulateMedia({ media: 'screen' })
    await sheet.goto(`${baseUrl}/scenarios/${longestId}/sheet`)
    await sheet.getByTestId('setup-sheet').waitFor()
    expect(await sheet.getByTestId('sheet-cautions').textContent()).toContain('Full open is above the boost limit')
    await sheet.emulateMedia({ media: 'print' })
    await sheet.screenshot({ path: screenshotPath('setup-sheet-longest.png'), fullPage: true })
    for (const format of ['A4', 'Letter'] as const) {
      const pdf = await sheet.pdf({ format, printBackground: true })
      expect(pageCount(pdf), `pages of the longest sheet on ${format}`).toBe(1)
    }
    expect(harness.pageErrors).toEqual([])
  })
})
