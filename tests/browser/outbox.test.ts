import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('the admin Outbox page', () => {
  it('shows the queue and the demo release notices the local catcher received, HTML in a sandboxed frame with its links listed', async () => {
    const page = await signInPage(browser, baseUrl(), 'admin@tercet.test')
    await page.getByRole('link', { name: 'Outbox' }).click()
    await page.waitForURL(/\/admin\/outbox$/)
    await hydrated(page)
    await expect.poll(() => page.locator('[data-test="relay"]').textContent()).toContain('local mail catcher')
    // the demo seed released shipments to customers whose buyers receive certificate notices
    await expect.poll(async () => {
      await page.locator('[data-test="refresh"]').click()
      return page.locator('[data-test="received-mail"]').count()
    }, { timeout: 30_000 }).toBeGreaterThan(0)
    await expect.poll(() => page.locator('[data-test="outbox-queue"]').textContent()).toContain('sent')
    // the newest message may be another test's (a password reset): take a release notice
    const first = page.locator('[data-test="received-mail"]').filter({ hasText: 'released' }).first()
    const frame = first.locator('iframe')
    expect(await frame.getAttribute('sandbox')).toBe('')
    expect(await frame.getAttribute('srcdoc')).toContain('<!doctype html>')
    // the frame draws the message itself
    await expect.poll(async () => (await Promise.all(page.frames().map((f) => f.content().catch(() => '')))).some((c) => c.includes('Open the shipment'))).toBe(true)
    expect(await first.textContent()).toMatch(/\/portal\/shipments\/\d+/)
    await first.getByRole('button', { name: 'Plain part' }).click()
    expect(await first.locator('pre').textContent()).toContain('Open the shipment:')
    await shot(page, 'admin-outbox')
  })

  it('is not offered to quality, who is sent to the lots instead', async () => {
    const page = await signInPage(browser, baseUrl(), 'quality@tercet.test')
    expect(await page.getByRole('link', { name: 'Outbox' }).count()).toBe(0)
    await page.goto(`${baseUrl()}/admin/outbox`)
    // sent to the role's landing page instead
    await page.waitForURL((u) => u.pathname === '/lots')
    expect(await page.locator('[data-test="outbox-queue"]').count()).toBe(0)
  })
})
