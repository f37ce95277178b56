// Quality builds a shipment from a lot and releases it, signing with the password; the customer then opens a serial,
// downloads every certificate as one ZIP and checks one on the public verification page.
import { readFileSync } from 'node:fs'
import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { baseUrl, DEMO_PASSWORD } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { startSecondServer } from '../support/second-server'
import { zipEntries } from '../support/zip-entries'

const TRIPLER = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const tag = `BF${Date.now().toString(36).slice(-5).toUpperCase()}`
const LOT = `${tag}-L`
const UNITS = 3
let db: Knex
let browser: Browser
let signing: { url: string; stop: () => void }
let shipmentUrl = ''

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  // a fresh lot of the tripler, every unit passing every step, released by quality
  const station = await db('stations').where({ name: 'ATE-T3-01' }).first('id', 'name')
  const rand = mulberry32(4242)
  const start = Date.now() - 5 * 3_600_000
  const runs = Array.from({ length: UNITS }, (_, i) => TRIPLER.steps.map((step, k) =>
    generateRun({ product: TRIPLER, lot: LOT, serial: `${tag}-${i + 1}`, step, startedAt: new Date(start + k * 600_000 + i * 1000), rand, failRate: 0, withTrace: step === 'final' }))).flat()
  expect((await ingestBatch(db, station, runs)).every((r) => r.status === 201)).toBe(true)
  const quality = await db('users').where({ role: 'quality' }).first('id')
  await db('lots').where({ code: LOT }).update({ status: 'released', released_at: new Date(), released_by: quality.id })
  // a server whose sign-in never counts as a signature, so the release asks for the password
  signing = await startSecondServer({ TERCET_SIGN_WINDOW_S: '0' })
  browser = await launchBrowser()
}, 120_000)

afterAll(async () => {
  await browser?.close()
  signing?.stop()
  await db?.destroy()
})

describe('a shipment from lot to customer', () => {
  it('quality builds a shipment from a lot and releases it, signing with the password', async () => {
    const page = await signInPage(browser, signing.url, 'quality@tercet.test')
    await page.goto(`${signing.url}/shipments`)
    const form = page.locator('[data-test=shipment-create]')
    await form.locator('#nc-customer').selectOption({ label: 'Quillfeather Radio Observatory' })
    await form.locator('#nc-po').fill(`PO-${tag}`)
    await form.getByRole('button', { name: 'New shipment' }).click()
    await page.waitForURL(/\/shipments\/\d+$/)
    shipmentUrl = new URL(page.url()).pathname
    await page.locator('#add-lot').fill(LOT)
    await page.getByRole('button', { name: 'Add the lot' }).click()
    await page.locator('[data-test=release]').waitFor()
    await page.locator('[data-test=release]').click()
    await page.locator('[data-test=sign-prompt]').waitFor()
    await shot(page, 'shipment-flow-1-sign')
    await page.locator('[data-test=sign-password]').fill(DEMO_PASSWORD)
    await page.locator('[data-test=sign-submit]').click()
    await expect.poll(() => page.locator('[data-test=shipment-status]').textContent(), { timeout: 20_000 }).toMatch(/released/i)
    await shot(page, 'shipment-flow-2-released')
    await page.context().close()
  })

  it('the customer opens a serial, downloads the certificates as one ZIP and checks one on the verification page', async () => {
    const id = shipmentUrl.split('/').pop()
    const page = await signInPage(browser, baseUrl(), 'buyer@quillfeather.test')
    await page.goto(`${baseUrl()}/portal/shipments/${id}`)
    await page.locator('[data-test=shipment-units] tbody tr').nth(UNITS - 1).waitFor()
    const [download] = await Promise.all([page.waitForEvent('download', { timeout: 60_000 }), page.locator('[data-test=zip-button]').click()])
    const entries = zipEntries(readFileSync((await download.path())!))
    expect(entries).toHaveLength(UNITS)
    for (const e of entries) {
      expect(e.name).toMatch(new RegExp(`^${tag}-\\d_[A-Za-z0-9-]+\\.pdf$`))
      expect(e.crcOk).toBe(true)
      expect(e.data.subarray(0, 5).toString()).toBe('%PDF-')
    }
    await page.locator('[data-test=zip-done]').waitFor()
    await shot(page, 'shipment-flow-3-customer-shipment')

    await page.locator('[data-test=shipment-units] tbody a').first().click()
    await page.waitForURL(/\/portal\/units\/VFW-T3-375\//)
    await page.locator('[data-test=phase-noise-chart] svg').first().waitFor()
    await page.locator('[data-test=verify-link]').first().waitFor()
    await shot(page, 'shipment-flow-4-customer-unit')
    const href = (await page.locator('[data-test=verify-link]').first().getAttribute('href'))!
    expect(href).toMatch(/^\/verify\/[A-Z0-9-]+$/)

    // the verification page is public: open it signed out, as whoever scans the QR code would
    const visitor = await browser.newContext({ viewport: { width: 1280, height: 800 } })
    const check = await visitor.newPage()
    await check.goto(`${baseUrl()}${href}`)
    await expect.poll(() => check.locator('body').textContent(), { timeout: 20_000 }).toMatch(/valid/i)
    const verified = (await check.locator('body').textContent())!
    expect(verified).toContain(`${tag}-1`)
    expect(verified).toContain('VFW-T3-375')
    await shot(check, 'shipment-flow-5-verify')
    await visitor.close()
    await page.context().close()
  })
})
