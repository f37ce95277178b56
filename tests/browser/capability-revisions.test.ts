import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { buildRevisionLot, type RevisionLot } from '../support/revision-lot'

let browser: Browser
let made: RevisionLot

beforeAll(async () => {
  browser = await launchBrowser()
  made = await buildRevisionLot(`B${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase())
}, 120_000)

afterAll(async () => { await browser?.close() })

describe('the lot page of a lot judged under two revisions', () => {
  it('says the figures are per revision and lists the parameter once per revision, with that revision\'s limits', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 1000 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/lots/${made.lot}`)
    const note = page.locator('[data-test="revision-note"]')
    await expect.poll(() => note.count(), { timeout: 20_000 }).toBe(1)
    expect(await note.textContent()).toMatch(/judged under revisions 1 and 2; figures are per revision/)

    const table = page.getByRole('table', { name: 'Parameters' })
    const powerRows = table.locator('tbody tr', { hasText: 'Output power' })
    await expect.poll(() => powerRows.count(), { timeout: 20_000 }).toBe(2)
    const texts = await powerRows.allTextContents()
    expect(texts[0]).toContain('rev. 1')
    expect(texts[1]).toContain('rev. 2')
    // each row carries its own revision's USL (12 and 13 dBm), shown to 0.01 dB as every dBm value is; the limits
    // cell holds LSL over USL
    const limitsColumn = (await table.locator('thead th').allTextContents()).findIndex((h) => /^LSL\s*USL/.test(h.trim()))
    expect(limitsColumn).toBeGreaterThan(0)
    const usl = (row: number) => powerRows.nth(row).locator('td').nth(limitsColumn).locator('span > span').last().textContent()
    expect((await usl(0))?.trim()).toBe('12.00')
    expect((await usl(1))?.trim()).toBe('13.00')
    expect(await page.locator('[data-test="interval-legend"]').first().textContent()).toContain('approximate')

    // the charts follow the chosen revision (a drawn chart says the page has hydrated and listens to clicks)
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(1)
    await powerRows.nth(0).click()
    await expect.poll(() => new URL(page.url()).searchParams.get('rev'), { timeout: 10_000 }).toBe('1')
    await expect.poll(() => page.getByLabel('Revision of the charts').inputValue(), { timeout: 20_000 }).toBe('1')
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2)
    await page.waitForTimeout(500)
    await shot(page, 'lot-two-revisions')
    expect(errors).toEqual([])
    await page.context().close()
  })

  it('the phase-noise page names the revision shown and offers the other', async () => {
    const page = await signInPage(browser, baseUrl(), 'quality@tercet.test', { width: 1280, height: 900 })
    await page.goto(`${baseUrl()}/lots/${made.lot}/phase-noise`)
    const note = page.locator('[data-test="revision-note"]')
    await expect.poll(() => note.count(), { timeout: 20_000 }).toBe(1)
    expect(await page.locator('[data-test="pn-revision"]').textContent()).toContain('rev. 2')
    // the chart is drawn in the browser only: once it is there, the page has hydrated and the select listens
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(1)
    await page.getByLabel('Revision', { exact: true }).selectOption('1')
    await expect.poll(() => page.locator('[data-test="pn-revision"]').textContent(), { timeout: 20_000 }).toContain('rev. 1')
    // the percentiles are read from kept bins, and the page says how close that is
    expect(await page.locator('[data-test="pn-resolution"]').textContent()).toMatch(/within one bin of the exact percentiles/)
    await shot(page, 'phase-noise-two-revisions')
    await page.context().close()
  })

  it('trends give the lot one row per revision and say so', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    await page.goto(`${baseUrl()}/trends?part=${made.part}&name=output_power&step=final`)
    const rows = page.getByRole('table', { name: 'Lots' }).locator('tbody tr')
    await expect.poll(() => rows.count(), { timeout: 20_000 }).toBe(2)
    expect((await rows.allTextContents()).map((t) => t.includes('rev. 1') ? 1 : t.includes('rev. 2') ? 2 : 0)).toEqual([1, 2])
    expect(await page.locator('[data-test="revision-note"]').textContent()).toMatch(/judged under revisions 1 and 2; figures are per revision/)
    await shot(page, 'trends-two-revisions')
    await page.context().close()
  })
})
