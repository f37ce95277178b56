import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('customer portal pages', () => {
  it('a customer reads the guide once, finds a serial and opens its values and phase-noise chart', async () => {
    const page = await signInPage(browser, baseUrl(), 'buyer@quillfeather.test')
    await expect.poll(() => page.locator('h1').first().textContent()).toContain('Your shipments')
    const guide = page.locator('[data-test=portal-guide]')
    await guide.waitFor()
    expect(await guide.textContent()).toContain('/verify/')
    await shot(page, 'portal-home-guide')
    await page.locator('[data-test=guide-dismiss]').click()
    await page.reload()
    await page.locator('[data-test=guide-reopen]').waitFor()
    expect(await guide.count()).toBe(0)

    await page.locator('[data-test=serial-search]').fill('T32611-000')
    const first = page.locator('[data-test=serial-results] a').first()
    await first.waitFor()
    const serial = (await first.textContent())!.trim()
    await first.click()
    await page.waitForURL(new RegExp(`/portal/units/VFW-T3-375/${serial}$`))
    await page.locator('[data-test=phase-noise-chart] svg').first().waitFor()
    expect(await page.locator('[data-test=measured-caution]').textContent()).toContain('acceptance criteria govern')
    expect(await page.locator('[data-test=step-final] tbody tr').count()).toBeGreaterThan(5)
    await shot(page, 'portal-unit')
    await page.context().close()
  })

  it('a customer opens a shipment and sees its units with the downloads', async () => {
    const page = await signInPage(browser, baseUrl(), 'buyer@saltmarsh.test')
    await page.locator('[data-test=shipment-list] a').first().click()
    await page.waitForURL(/\/portal\/shipments\/\d+$/)
    await page.locator('[data-test=shipment-units] tbody tr').first().waitFor()
    expect(await page.locator('[data-test=csv-link]').getAttribute('href')).toMatch(/\/measurements\.csv$/)
    await shot(page, 'portal-shipment')
    await page.context().close()
  })
})
