import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { firstCustomerId, makePart, postRun, releaseLot } from '../support/shipping'

let browser: Browser
const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const P = `SB-${tag}`.slice(0, 30)
const LOT = `${P}-1`.slice(0, 32)

beforeAll(async () => {
  browser = await launchBrowser()
  await makePart(P)
  for (const s of ['U1', 'U2', 'U3']) await postRun(P, LOT, s)
  await postRun(P, LOT, 'UF', { power: 20 })
  await releaseLot(LOT, await signIn(ROLE_ACCOUNTS.quality), { deviation: 'One failing unit stays behind' })
}, 120_000)
afterAll(async () => { await browser?.close() })

describe('a shipment in the browser', () => {
  it('checks a pasted list row by row, adds it, and releases the shipment with its certificates', async () => {
    const quality = await signIn(ROLE_ACCOUNTS.quality)
    const created = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: await firstCustomerId(quality), customerPo: `PO-${tag}` } })
    const id = created.body.shipment.id
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.quality, { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/shipments/${id}`)
    const list = page.locator('[data-test="serial-list"]')
    await list.click()
    await list.pressSequentially('U1\nU2\nUF\nNOPE\n')
    await page.locator('[data-test="serial-check"]').click()
    const preview = page.locator('[data-test="serial-preview"]')
    await expect.poll(() => preview.textContent(), { timeout: 20_000 }).toContain('unknown serial')
    expect(await preview.textContent()).toContain('not passing')
    await shot(page, 'shipment-serial-preview')
    expect(await page.locator('[data-test="serial-confirm"]').isDisabled()).toBe(true)

    await list.fill('U1\nU2\n')
    await page.locator('[data-test="serial-check"]').click()
    await page.locator('[data-test="serial-confirm"]').click()
    await expect.poll(() => page.locator('[data-test="shipment-units"]').textContent(), { timeout: 20_000 }).toContain('U2')
    await page.locator('[data-test="release"]').click()
    await expect.poll(() => page.locator('[data-test="shipment-status"]').textContent(), { timeout: 20_000 }).toMatch(/released/i)
    await expect.poll(() => page.locator('[data-test="shipment-units"]').textContent(), { timeout: 20_000 }).toContain('valid')
    await shot(page, 'shipment-released')

    // the lot page says how many of its passing units have left
    const dispatched = await call('POST', `/api/shipments/${id}/dispatch`, { cookie: quality, body: { carrier: 'Northwind Couriers', trackingRef: `NW-${tag}` } })
    expect(dispatched.status).toBe(200)
    await page.goto(`${baseUrl()}/lots/${LOT}`)
    await expect.poll(() => page.locator('[data-test="lot-shipping"]').textContent(), { timeout: 20_000 }).toContain('2 of 3 passing units dispatched')
    expect(errors).toEqual([])
    await page.context().close()
  })
})
