// An administrator changes the calibration due-soon period on the stations page; an engineer reads it there.
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => {
  await call('PUT', '/api/settings/calibration-due-soon-days', { cookie: await signIn('admin@tercet.test'), body: { days: 30 } })
  await browser?.close()
})

describe('the due-soon period on the stations page', () => {
  it('an administrator saves a new period; an engineer sees it without the form', async () => {
    const page = await signInPage(browser, baseUrl(), 'admin@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/stations`)
    const form = page.locator('[data-test="due-soon-setting"]')
    await expect.poll(() => form.textContent(), { timeout: 20_000 }).toContain('within 30 days')
    await form.getByLabel('Days').fill('21')
    await form.getByRole('button', { name: 'Save' }).click()
    await expect.poll(() => form.textContent(), { timeout: 10_000 }).toContain('Saved.')
    expect(await form.textContent()).toContain('within 21 days')
    expect(await form.textContent()).toContain('Set by Ada Quillon')
    await shot(page, 'stations-due-soon-setting')
    expect((await call('GET', '/api/settings', { cookie: await signIn('engineer@tercet.test') })).body.calibrationDueSoonDays.value).toBe(21)
    expect(errors).toEqual([])
    await page.context().close()

    const eng = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    await eng.goto(`${baseUrl()}/stations`)
    const shown = eng.locator('[data-test="due-soon-setting"]')
    await expect.poll(() => shown.textContent(), { timeout: 20_000 }).toContain('within 21 days')
    expect(await shown.getByLabel('Days').count()).toBe(0)
    await eng.context().close()
  })
})
