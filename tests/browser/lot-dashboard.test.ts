import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('lot dashboard in the browser', () => {
  it('renders the capability table with Cpk and bands, and the charts of the selected parameter', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/lots/T3-2611-A`)
    const table = page.getByRole('table', { name: 'Parameters' })
    await expect.poll(() => table.locator('tbody tr').count(), { timeout: 20_000 }).toBeGreaterThan(10)
    const header = await table.locator('thead').textContent()
    expect(header).toContain('Cpk')
    const body = (await table.locator('tbody').textContent()) ?? ''
    expect(body).toMatch(/CAPABLE|MARGINAL|NOT CAPABLE/)
    await table.locator('tbody tr').first().click()
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(3)
    await page.waitForTimeout(500)
    await shot(page, 'lot-dashboard-T3-2611-A')
    expect(errors).toEqual([])
    await page.context().close()
  })
})

describe('cross-lot views in the browser', () => {
  it('trends and station comparison open from a shareable URL and render their tables', async () => {
    const page = await signInPage(browser, baseUrl(), 'quality@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/trends?part=VFW-T3-375&name=output_power&step=final`)
    await expect.poll(() => page.locator('table tbody tr').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2)
    expect(await page.locator('table tbody').first().textContent()).toContain('T3-2611-A')
    await shot(page, 'trends-T3-output-power')
    await page.goto(`${baseUrl()}/stations/compare?part=VFW-T3-375&name=output_power&step=final`)
    await expect.poll(() => page.locator('table tbody tr').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2)
    expect(await page.locator('table tbody').first().textContent()).toContain('ATE-T3-0')
    await shot(page, 'stations-compare-T3-output-power')
    expect(errors).toEqual([])
    await page.context().close()
  })

  it('filters the lots list by status and text, kept in the address', async () => {
    const page = await signInPage(browser, baseUrl(), 'quality@tercet.test', { width: 1280, height: 800 })
    await page.goto(`${baseUrl()}/lots?status=released`)
    const rows = page.getByRole('table', { name: 'Lots' }).locator('tbody tr')
    await expect.poll(() => rows.count(), { timeout: 20_000 }).toBeGreaterThan(0)
    const statuses = await rows.locator('td:nth-child(4)').allTextContents()
    expect(new Set(statuses.map((t) => t.trim()))).toEqual(new Set(['Released']))
    expect((await rows.locator('td:first-child').allTextContents()).map((t) => t.trim())).toContain('T3-2611-A')
    await page.getByLabel('Lot, part or product contains').fill('X8-2611')
    await expect.poll(() => page.getByText('No lot matches these filters.').count(), { timeout: 10_000 }).toBe(1)
    await page.getByLabel('Status').selectOption('')
    await expect.poll(async () => (await rows.locator('td:first-child').allTextContents()).map((t) => t.trim()), { timeout: 10_000 }).toEqual(['X8-2611-A'])
    expect(new URL(page.url()).searchParams.get('q')).toBe('X8-2611')
    await page.context().close()
  })
})
