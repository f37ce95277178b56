// An unknown page answers 404 with Tercet's own page: the status, plain words and a way back.
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('the error page', () => {
  it('answers an unknown page with status 404 and Tercet\'s page', async () => {
    const r = await call('GET', '/no-such-page-here', { cookie: await signIn('engineer@tercet.test'), headers: { accept: 'text/html' } })
    expect(r.status).toBe(404)
    expect(r.body).toContain('data-test="error-page"')
    expect(r.body).toContain('Nothing at this address')
  })

  it('shows the status and plain words, and takes the user back to the start page', async () => {
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1280, height: 800 })
    const response = await page.goto(`${baseUrl()}/no-such-page-here`)
    expect(response?.status()).toBe(404)
    await hydrated(page)
    expect(await page.locator('[data-test="error-status"]').textContent()).toBe('404')
    expect(await page.locator('h1').textContent()).toBe('Nothing at this address')
    expect(await page.title()).toBe('404 · Tercet')
    expect(await page.getByRole('link', { name: 'Sign in again' }).count()).toBe(1)
    await shot(page, 'error-404')
    await page.getByRole('link', { name: 'Go to the start page' }).click()
    await page.waitForURL((u) => u.pathname !== '/no-such-page-here')
    expect(await page.locator('[data-test="error-page"]').count()).toBe(0)
    await page.context().close()
  })
})
