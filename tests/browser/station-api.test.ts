// An administrator follows the stations page's link to the station software page and reads the schema and example.
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('the station software page', () => {
  it('is linked from /stations and shows the served schema, the rules and a valid example', async () => {
    const page = await signInPage(browser, baseUrl(), 'admin@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/stations`)
    await hydrated(page)
    await page.locator('[data-test="stations-links"]').getByRole('link', { name: /station software/i }).click()
    await page.waitForURL(/\/stations\/api$/)
    const table = page.locator('[data-test="run-schema-table"]')
    await expect.poll(() => table.locator('tbody tr').count(), { timeout: 20_000 }).toBeGreaterThan(20)
    const idRow = table.locator('tbody tr', { hasText: 'format uuid' }).first()
    expect(await idRow.locator('td').first().textContent()).toBe('id')
    expect(await idRow.locator('td').nth(2).textContent()).toBe('yes')
    expect(await table.textContent()).toContain('required when name is "phase_noise"')
    const request = await page.locator('[data-test="example-request"]').textContent()
    expect(request).toContain('Authorization: Bearer')
    expect(request).toContain('"partNumber": "VFW-D2-250"')
    expect(await page.locator('[data-test="example-response"]').textContent()).toContain('201 Created')
    expect(await page.locator('[data-test="station-retry-rules"]').textContent()).toContain('Retry-After')
    const href = await page.locator('[data-test="import-template"]').getAttribute('href')
    expect(decodeURIComponent(href!.split(',').slice(1).join(','))).toMatch(/^id,serial,partNumber,lot,step,startedAt,finishedAt/)
    await shot(page, 'station-api-page')
    expect(errors).toEqual([])
    await page.context().close()
  })
})

describe('a station page', () => {
  it('lists the station\'s latest runs, each serial linking to its unit', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    await page.goto(`${baseUrl()}/stations`)
    await hydrated(page)
    expect(await page.locator('[data-test="stations-links"]').getByRole('link', { name: 'Compare stations' }).getAttribute('href')).toBe('/stations/compare')
    await page.getByRole('link', { name: 'ATE-D2-01' }).click()
    const runs = page.locator('[data-test="station-recent-runs"]')
    await expect.poll(() => runs.locator('tbody tr').count(), { timeout: 20_000 }).toBe(20)
    const first = runs.locator('tbody tr').first().locator('a').first()
    // other tests post to this station too, so the newest run may be of any part: the link names the part it is of
    expect(await first.getAttribute('href')).toMatch(/^\/units\/[^?/]+\?part=[^&]+$/)
    await shot(page, 'station-recent-runs')
    await page.context().close()
  })
})
