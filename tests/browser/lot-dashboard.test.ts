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

describe('the lot dashboard at 1440 px', () => {
  it('shows every capability column without a scrolling box, and draws its charts in the house look', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/lots/T3-2611-A`)
    const table = page.getByRole('table', { name: 'Parameters' })
    await expect.poll(() => table.locator('tbody tr').count(), { timeout: 20_000 }).toBeGreaterThan(10)

    // the table and the page fit the window's width: no box to scroll sideways
    const fit = await table.evaluate((t) => {
      const box = t.parentElement!
      return { scroll: box.scrollWidth, client: box.clientWidth, page: document.documentElement.scrollWidth, window: window.innerWidth }
    })
    expect(fit.scroll).toBeLessThanOrEqual(fit.client)
    expect(fit.page).toBeLessThanOrEqual(fit.window)
    // every figure is still there: the file-only columns aside, each header names a shown column
    expect((await table.locator('thead').textContent())!.replace(/\s+/g, ' ')).toMatch(/Min\s*Max.*LSL\s*USL.*Cpk.*Obs\.\s*ppm.*Exp\.\s*ppm/i)

    const individuals = page.locator('figure[aria-label^="Individuals chart"]')
    await expect.poll(() => individuals.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBe(1)
    await page.waitForTimeout(300)
    const legend = individuals.locator('[data-test="chart-legend"]')
    // the legend draws limits dashed and the trace solid, as on the plot; the library's own legend is off
    expect(await legend.locator('li[data-glyph="dashed"]').allTextContents()).toContain('control limits (3σ)')
    expect(await legend.locator('li[data-glyph="solid"]').allTextContents()).toContain('value')
    expect(await page.locator('.apexcharts-legend-series').count()).toBe(0)

    // every rule hit's mark is explained: the first rule each listed point breaks has a marker entry of its own
    // (the list is laid out when opened)
    const hits = individuals.locator('xpath=ancestor::div[contains(@class,"panel")]//details')
    expect(await hits.locator('tbody tr').count()).toBe(0)
    await hits.locator('summary').click()
    await expect.poll(() => hits.locator('tbody tr').count()).toBeGreaterThan(0)
    const hitRules = await individuals.locator('xpath=ancestor::div[contains(@class,"panel")]//details//tbody//tr/td[5]').allTextContents()
    const firstRules = new Set(hitRules.map((t) => Math.min(...[...t.matchAll(/Rule (\d)/g)].map((m) => Number(m[1])))))
    const markerEntries = await legend.locator('li[data-glyph^="marker-"]').evaluateAll((els) => els.map((e) => ({ text: e.textContent!.trim(), glyph: e.getAttribute('data-glyph') })))
    expect(firstRules.size).toBeGreaterThan(0)
    for (const r of firstRules) expect(markerEntries.some((m) => m.text.startsWith(`Rule ${r}`))).toBe(true)
    expect(new Set(markerEntries.map((m) => m.glyph)).size).toBe(markerEntries.length)

    // limit names are plain text outside the plot: no label boxes anywhere, UCL to the right of the grid
    await expect.poll(() => page.locator('.apexcharts-yaxis-annotations text, .apexcharts-xaxis-annotations text').count(), { timeout: 10_000 }).toBeGreaterThan(0)
    expect(await page.locator('.apexcharts-yaxis-annotations rect, .apexcharts-xaxis-annotations rect').count()).toBe(0)
    const geometry = await individuals.evaluate((f) => {
      const grid = f.querySelector('.apexcharts-gridlines-horizontal line')!.getBoundingClientRect()
      const ucl = [...f.querySelectorAll('.apexcharts-yaxis-annotations text')].find((t) => t.textContent === 'UCL')!.getBoundingClientRect()
      const line = f.querySelector('.apexcharts-series[seriesName="value"] path.apexcharts-line')!.getBoundingClientRect()
      return { gridLeft: grid.left, gridRight: grid.right, uclLeft: ucl.left, lineLeft: line.left, lineRight: line.right }
    })
    expect(geometry.uclLeft).toBeGreaterThanOrEqual(geometry.gridRight)
    // the first and last points stand clear of the plot's edges, their markers whole
    expect(geometry.lineLeft - geometry.gridLeft).toBeGreaterThan(4)
    expect(geometry.gridRight - geometry.lineRight).toBeGreaterThan(4)

    await shot(page, 'lot-dashboard-1440')
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
