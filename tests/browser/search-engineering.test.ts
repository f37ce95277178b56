import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser
// the page waits for the server and a debounce: give each poll room on a loaded machine
const SLOW = { timeout: 15_000 }
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('header search', () => {
  it('groups hits, moves with the arrow keys and opens an exact match with Enter', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/lots`)
    await hydrated(page)
    const box = page.getByRole('combobox', { name: 'Find a serial, lot or part' })

    await box.fill('T3-26')
    const list = page.getByRole('listbox', { name: 'Search results' })
    await expect.poll(() => list.getByRole('option').allTextContents(), SLOW).toEqual(expect.arrayContaining([expect.stringContaining('T3-2611-A'), expect.stringContaining('T3-2612-B')]))
    expect(await list.textContent()).toContain('Lots')
    await shot(page, 'header-search-lots')
    // the second hit, by keyboard
    await box.press('ArrowDown')
    await box.press('ArrowDown')
    expect(await list.locator('[aria-selected=true]').textContent()).toContain('T3-2612-B')
    await box.press('Enter')
    await page.waitForURL(/\/lots\/T3-2612-B$/)

    // an exact serial opens its unit page without choosing
    await box.fill('T32612-0007')
    await expect.poll(() => list.locator('[data-test=search-hit-units]').count(), SLOW).toBe(1)
    await box.press('Enter')
    await page.waitForURL(/\/units\/T32612-0007\?part=VFW-T3-375$/)
    await expect.poll(() => page.locator('[data-test=unit-header]').textContent(), SLOW).toContain('T32612-0007')
    // an internal unit page carries no customer caution
    expect(await page.locator('[data-test=measured-caution]').count()).toBe(0)

    // a part opens its specification; Escape closes the list
    await box.fill('vfw-x8')
    await expect.poll(() => list.locator('[data-test=search-hit-parts]').count(), SLOW).toBe(1)
    await box.press('Escape')
    expect(await list.count()).toBe(0)
    await box.press('ArrowDown')
    await box.press('Enter')
    await page.waitForURL(/\/specs\/VFW-X8-12G$/)
    await expect.poll(() => page.locator('#eng-pattern').inputValue(), SLOW).toBe('*-E')
    await page.locator('[data-test=engineering-pattern]').scrollIntoViewIfNeeded()
    await shot(page, 'spec-engineering-pattern')

    await box.fill('zz-nothing-here')
    await expect.poll(() => list.textContent(), SLOW).toContain('No serial, lot or part starts with')
    await page.context().close()
  })
})

describe('engineering lots on the pages', () => {
  it('the lots list badges and filters them; the lot page shows the badge; trends take them in only with the switch', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/lots`)
    await hydrated(page)
    const row = page.locator('tr', { hasText: 'X8-2612-E' })
    await expect.poll(() => row.locator('[data-test=engineering-badge]').count(), SLOW).toBe(1)
    expect(await page.locator('tr', { hasText: 'X8-2611-A' }).locator('[data-test=engineering-badge]').count()).toBe(0)
    await page.locator('#lots-kind').selectOption('engineering')
    await expect.poll(() => new URL(page.url()).searchParams.get('kind'), SLOW).toBe('engineering')
    await expect.poll(() => page.locator('tbody tr').count(), SLOW).toBeGreaterThan(0)
    expect(await page.locator('tbody tr', { hasText: 'X8-2611-A' }).count()).toBe(0)
    await shot(page, 'lots-engineering-filter')

    // the code is a working link to the lot's page
    await page.locator('tbody tr', { hasText: 'X8-2612-E' }).getByRole('link', { name: 'X8-2612-E' }).click()
    await page.waitForURL(/\/lots\/X8-2612-E$/)
    const kind = page.locator('[data-test=lot-kind]')
    await expect.poll(() => kind.textContent(), SLOW).toContain('by its code pattern')
    expect(await kind.locator('[data-test=engineering-badge]').textContent()).toMatch(/Engineering lot/i)
    await shot(page, 'lot-engineering')

    await page.goto(`${baseUrl()}/trends?part=VFW-X8-12G&name=output_power&step=final`)
    await hydrated(page)
    const lotCells = () => page.locator('table tbody tr td:first-child').allTextContents()
    await expect.poll(async () => (await lotCells()).some((t) => t.includes('X8-2611-A')), SLOW).toBe(true)
    expect((await lotCells()).some((t) => t.includes('X8-2612-E'))).toBe(false)
    await page.locator('[data-test=engineering-switch] input').check()
    await expect.poll(() => new URL(page.url()).searchParams.get('engineering'), SLOW).toBe('include')
    await expect.poll(async () => (await lotCells()).some((t) => t.includes('X8-2612-E')), SLOW).toBe(true)
    await shot(page, 'trends-engineering-included')
    // the address keeps the switch: a reload shows the same lots
    await page.reload()
    await hydrated(page)
    expect(await page.locator('[data-test=engineering-switch] input').isChecked()).toBe(true)
    await expect.poll(async () => (await lotCells()).some((t) => t.includes('X8-2612-E')), SLOW).toBe(true)

    // station comparison keeps the switch from the trends link
    await page.getByRole('link', { name: 'Compare stations →' }).click()
    await page.waitForURL(/\/stations\/compare\?.*engineering=include/)
    await hydrated(page)
    expect(await page.locator('[data-test=engineering-switch] input').isChecked()).toBe(true)
    await expect.poll(() => page.locator('#cmp-lot option').allTextContents(), SLOW).toContain('X8-2612-E (engineering)')
    await shot(page, 'compare-engineering-included')
    await page.context().close()
  })
})
