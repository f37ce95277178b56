// Printed, the lot, unit and shipment pages keep their tables and lose the header, navigation and buttons.
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('printing a record page', () => {
  for (const [name, path] of [['lot', '/lots/D2-2611-A'], ['unit', '/units/D22611-0042?part=VFW-D2-250'], ['shipments', '/shipments']] as const) {
    it(`the ${name} page prints without navigation or buttons, tables visible`, async () => {
      const page = await signInPage(browser, baseUrl(), 'quality@tercet.test', { width: 1280, height: 900 })
      await page.goto(`${baseUrl()}${path}`)
      await hydrated(page)
      await expect.poll(() => page.locator('table').count(), { timeout: 20_000 }).toBeGreaterThan(0)
      expect(await page.locator('nav[aria-label="Main"]').isVisible()).toBe(true)
      await page.emulateMedia({ media: 'print' })
      expect(await page.locator('nav[aria-label="Main"]').isVisible()).toBe(false)
      expect(await page.locator('header').first().isVisible()).toBe(false)
      const buttons = await page.locator('button').evaluateAll((els) => els.filter((e) => (e as HTMLElement).offsetParent !== null && !e.closest('th')).length)
      expect(buttons).toBe(0)
      expect(await page.locator('table').first().isVisible()).toBe(true)
      // column headings stay on paper
      expect((await page.locator('table').first().locator('th').first().innerText()).trim()).not.toBe('')
      await shot(page, `print-${name}`)
      await page.context().close()
    })
  }
})
