// The main journey of two roles, driven as a person would: an engineer goes from the lots list to the chart of a
// parameter with values out of specification; an administrator creates a station, reads the station software page
// and posts its worked example with the new token. (The operator's floor journey is in floor.test.ts, quality's
// approval of a submitted draft in spec-approval-route.test.ts.)
import { randomUUID } from 'node:crypto'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { CapabilityRow } from '#shared/types/capability'
import { baseUrl, call, signIn } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

/** A demo lot with a parameter that has values outside its limits, found through the API the pages use. */
async function lotWithFailingParameter(cookie: string): Promise<{ code: string; row: CapabilityRow }> {
  const lots = await call('GET', '/api/lots', { cookie })
  for (const lot of lots.body.lots as { code: string }[]) {
    const summary = await call('GET', `/api/lots/${lot.code}/summary`, { cookie })
    const row = (summary.body.capability as CapabilityRow[] | undefined)?.find((r) => r.outOfSpec > 0)
    if (row) return { code: lot.code, row }
  }
  throw new Error('no demo lot has a parameter out of specification')
}

describe('an engineer', () => {
  it('goes from the lots list to the chart of a failing parameter', async () => {
    const { code, row } = await lotWithFailingParameter(await signIn('engineer@tercet.test'))
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/lots`)
    await hydrated(page)
    await page.getByLabel('Lot, part or product contains').fill(code)
    await page.getByRole('table', { name: 'Lots' }).getByRole('link', { name: code, exact: true }).click()
    await page.waitForURL(new RegExp(`/lots/${code}`))
    await hydrated(page)

    const table = page.getByRole('table', { name: 'Parameters' })
    const target = table.locator('tbody tr').filter({ hasText: row.label }).filter({ hasText: row.step }).first()
    await target.waitFor({ timeout: 20_000 })
    await target.click()
    await page.waitForURL((u) => u.searchParams.get('name') === row.name)
    await expect.poll(() => page.locator('h2', { hasText: row.label }).count(), { timeout: 20_000 }).toBeGreaterThan(0)
    await expect.poll(() => page.locator('.apexcharts-canvas').count(), { timeout: 20_000 }).toBeGreaterThanOrEqual(2)
    await page.waitForTimeout(500)
    await shot(page, 'journey-engineer-failing-parameter')
    expect(errors).toEqual([])
    await page.context().close()
  })
})

describe('an administrator', () => {
  it('creates a station, reads the station software page and posts its example with the new token', async () => {
    const name = `ATE-J${Date.now().toString(36).toUpperCase().slice(-6)}`
    const page = await signInPage(browser, baseUrl(), 'admin@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/stations`)
    await hydrated(page)
    const form = page.locator('[data-test=new-station]')
    await form.getByLabel('Name').fill(name)
    await form.getByLabel('Location').fill('Bay 3, bench 2')
    await form.getByRole('button', { name: /create station/i }).click()
    const tokenBox = page.locator('[data-test=token-value]')
    await tokenBox.waitFor({ timeout: 20_000 })
    const token = await tokenBox.inputValue()
    expect(token.length).toBeGreaterThan(20)
    await expect.poll(() => page.locator('[data-test=stations-table]').textContent()).toContain(name)
    await shot(page, 'journey-admin-station-created')

    await page.locator('[data-test="stations-links"]').getByRole('link', { name: /station software/i }).click()
    await page.waitForURL(/\/stations\/api$/)
    await hydrated(page)
    const request = (await page.locator('[data-test="example-request"]').textContent()) ?? ''
    expect(request).toContain('Authorization: Bearer')
    await shot(page, 'journey-admin-api-page')

    // the example as the page shows it, with an id and serial of its own, is accepted from the new station
    const example = JSON.parse(request.slice(request.indexOf('{'), request.lastIndexOf('}') + 1))
    const serial = `J-${randomUUID().slice(0, 8)}`
    const [verb, path] = request.trim().split(/\s+/)
    expect(verb).toBe('POST')
    const posted = await call('POST', path!, { token, body: { ...example, id: randomUUID(), serial } })
    expect(posted.status).toBe(201)
    expect(posted.body.station).toBe(name)

    await page.goto(`${baseUrl()}/stations`)
    await hydrated(page)
    await page.locator('[data-test=stations-table]').getByRole('link', { name, exact: true }).click()
    await page.waitForURL(/\/stations\/\d+$/)
    await expect.poll(() => page.getByRole('link', { name: serial }).count(), { timeout: 20_000 }).toBe(1)
    await shot(page, 'journey-admin-station-first-run')
    expect(errors).toEqual([])
    await page.context().close()
  })
})
