import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser
// the page waits for the server and a debounce: give each poll room on a loaded machine
const SLOW = { timeout: 15_000 }
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('lot units page', () => {
  it('pages through the units, shows a hidden column on request and links the CSV to the filters in use', async () => {
    const total = (await call('GET', '/api/lots/T3-2612-B/units', { cookie: await signIn(ROLE_ACCOUNTS.engineer) })).body.total
    expect(total).toBeGreaterThan(25)
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/lots/T3-2612-B/units`)
    await hydrated(page)
    const rows = page.locator('[data-test=units-table] tbody tr')
    await rows.first().waitFor()
    expect(await page.locator('[data-test=pager]').textContent()).toContain(`page 1 of ${Math.ceil(total / 50)}`)

    await page.locator('#page-size').selectOption('25')
    await expect.poll(() => rows.count()).toBe(25)
    const pages = Math.ceil(total / 25)
    expect(await page.locator('[data-test=pager]').textContent()).toContain(`page 1 of ${pages}`)
    const firstOfPageOne = await rows.first().locator('td').first().textContent()
    await page.getByRole('button', { name: 'Next' }).click()
    await expect.poll(() => page.locator('[data-test=pager]').textContent()).toContain(`page 2 of ${pages}`)
    await expect.poll(() => rows.first().locator('td').first().textContent()).not.toBe(firstOfPageOne)

    const headers = () => page.locator('[data-test=units-table] thead th').allTextContents()
    expect((await headers()).some((h) => /Runs/i.test(h))).toBe(false)
    await page.locator('summary', { hasText: 'Columns' }).click()
    await page.getByLabel('Runs', { exact: true }).check()
    await expect.poll(async () => (await headers()).some((h) => /Runs/i.test(h))).toBe(true)

    await page.locator('#f-verdict').selectOption('pass')
    await expect.poll(() => page.locator('[data-test=units-csv]').getAttribute('href')).toContain('verdict=pass')
    // a filter sends the list back to its first page
    await expect.poll(() => page.locator('[data-test=pager]').textContent()).toContain('page 1 of')
    expect(await page.locator('[data-test=units-csv]').getAttribute('href')).toMatch(/^\/api\/lots\/T3-2612-B\/units\.csv\?sort=serial&dir=asc&verdict=pass$/)
    await shot(page, 'lot-units-pages')
    await page.context().close()
  })

  it('renders the first page of units on the server, so the page hydrates without a mismatch', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    const html = await (await page.request.get(`${baseUrl()}/lots/T3-2612-B/units`)).text()
    expect(html).toContain('href="/units/T32612-0001"')
    const errors: string[] = []
    page.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()) })
    await page.goto(`${baseUrl()}/lots/T3-2612-B/units`)
    await hydrated(page)
    await page.locator('[data-test=units-table] tbody tr').first().waitFor()
    expect(errors.filter((e) => /hydration/i.test(e))).toEqual([])
    await page.context().close()
  })

  it('keeps filters, sort and page in the address: a reload and back from a unit restore them', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/lots/T3-2612-B/units`)
    await hydrated(page)
    const rows = page.locator('[data-test=units-table] tbody tr')
    await rows.first().waitFor()
    await page.locator('#f-verdict').selectOption('pass')
    await expect.poll(() => new URL(page.url()).searchParams.get('verdict'), SLOW).toBe('pass')
    await page.locator('#page-size').selectOption('25')
    await page.getByRole('button', { name: 'Next' }).click()
    await expect.poll(() => new URL(page.url()).searchParams.get('page'), SLOW).toBe('2')
    expect(new URL(page.url()).searchParams.get('pageSize')).toBe('25')

    await page.reload()
    await hydrated(page)
    expect(await page.locator('#f-verdict').inputValue()).toBe('pass')
    await expect.poll(() => page.locator('[data-test=pager]').textContent(), SLOW).toContain('page 2 of')
    const firstSerial = (await rows.first().locator('td').first().textContent())!.trim()
    // every row shown passed: the filter reached the server after the reload
    expect(await page.locator('[data-test=units-table] tbody tr', { hasText: /fail|incomplete/ }).count()).toBe(0)

    await rows.first().locator('a').first().click()
    await page.waitForURL(/\/units\/[^/?]+/)
    await page.goBack()
    await expect.poll(() => page.locator('[data-test=pager]').textContent(), SLOW).toContain('page 2 of')
    expect(await page.locator('#f-verdict').inputValue()).toBe('pass')
    expect((await rows.first().locator('td').first().textContent())!.trim()).toBe(firstSerial)
    // back again steps to the first page of the same filter
    await page.goBack()
    await expect.poll(() => page.locator('[data-test=pager]').textContent(), SLOW).toContain('page 1 of')
    expect(new URL(page.url()).searchParams.get('verdict')).toBe('pass')
    await shot(page, 'lot-units-address')
    await page.context().close()
  })
})
