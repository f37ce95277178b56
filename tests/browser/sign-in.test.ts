import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, freshAddress } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

const LANDINGS = [
  { email: 'admin@tercet.test', path: '/admin/users', heading: 'Users' },
  { email: 'quality@tercet.test', path: '/lots', heading: 'Lots' },
  { email: 'engineer@tercet.test', path: '/lots', heading: 'Lots' },
  { email: 'operator@tercet.test', path: '/floor', heading: 'Floor' },
  { email: 'buyer@quillfeather.test', path: '/portal', heading: 'Your shipments' },
]

describe('signing in and out in the browser', () => {
  it('shows the sign-in page to a visitor and refuses a wrong password without saying which part was wrong', async () => {
    const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}/lots`)
    await page.waitForURL(/\/login/)
    await page.getByLabel('E-mail').fill('engineer@tercet.test')
    await page.getByLabel('Password').fill('not the password')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await expect.poll(() => page.getByRole('alert').textContent()).toContain('not correct')
    await shot(page, 'sign-in-refused')
    await context.close()
  })

  for (const l of LANDINGS) {
    it(`${l.email} lands on ${l.path} and signs out`, async () => {
      const page = await signInPage(browser, baseUrl(), l.email)
      expect(new URL(page.url()).pathname).toBe(l.path)
      if (l.heading) await expect.poll(() => page.locator('h1').first().textContent()).toContain(l.heading)
      await shot(page, `landing-${l.email.split('@')[0]}-${l.email.split('@')[1]!.split('.')[0]}`)
      await page.getByRole('button', { name: 'Sign out' }).click()
      await page.waitForURL(/\/login/)
      await page.goto(`${baseUrl()}${l.path}`)
      await page.waitForURL(/\/login/)
      await page.context().close()
    })
  }

  it('keeps a customer out of staff pages', async () => {
    const page = await signInPage(browser, baseUrl(), 'buyer@saltmarsh.test')
    await page.goto(`${baseUrl()}/admin/users`)
    await page.waitForURL(/\/portal/)
    await page.context().close()
  })
})
