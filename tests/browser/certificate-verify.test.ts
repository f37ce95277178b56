import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { testedShipment, type CertifiedSet } from '../support/certified-units'
import { baseUrl, freshAddress, signIn } from '../support/http'
import { launchBrowser, shot } from '../support/browser'

let browser: Browser
let db: Knex
let set: CertifiedSet
let document: Buffer
const tag = `CB${Date.now().toString(36).toUpperCase()}`

beforeAll(async () => {
  browser = await launchBrowser()
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  set = await testedShipment(db, { tag, count: 1, customer: 'QUILL' })
  const cookie = await signIn('buyer@quillfeather.test')
  const r = await fetch(`${baseUrl()}/api/certificates/${set.issued[0]!.number}.pdf`, { headers: { cookie } })
  expect(r.status).toBe(200)
  document = Buffer.from(await r.arrayBuffer())
})
afterAll(async () => { await browser?.close(); await db?.destroy() })

describe('the public verification page', () => {
  it('opens signed out, states the certificate and tells a matching copy from a changed one', async () => {
    const c = set.issued[0]!
    const context = await browser.newContext({ viewport: { width: 1100, height: 900 }, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}/verify/${c.verifyCode}`)
    expect(new URL(page.url()).pathname).toBe(`/verify/${c.verifyCode}`)
    await expect.poll(() => page.locator('[data-test="status-chip"]').textContent()).toContain('VALID')
    expect(await page.locator('[data-test="serial"]').textContent()).toBe(set.units[0]!.serial)
    await expect.poll(() => page.getByText(c.number).count()).toBeGreaterThan(0)

    await page.locator('[data-test="file-input"]').setInputFiles({ name: `${c.number}.pdf`, mimeType: 'application/pdf', buffer: document })
    await expect.poll(() => page.locator('[data-test="file-result"]').textContent()).toContain('matches the document issued')
    expect(await page.locator('[data-test="file-result"]').textContent()).not.toContain('does not match')
    await shot(page, 'certificate-verify-match')

    const tampered = Buffer.from(document)
    tampered[Math.floor(tampered.length / 2)] ^= 0x01
    await page.locator('[data-test="file-input"]').setInputFiles({ name: 'changed.pdf', mimeType: 'application/pdf', buffer: tampered })
    await expect.poll(() => page.locator('[data-test="file-result"]').textContent()).toContain('does not match')
    await shot(page, 'certificate-verify-mismatch')
    await context.close()
  })

  it('says plainly when no certificate has the code', async () => {
    const context = await browser.newContext({ viewport: { width: 1100, height: 700 }, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}/verify/NOT-A-CODE`)
    await expect.poll(() => page.locator('[data-test="unknown"]').textContent()).toContain('No certificate has this verification code')
    await shot(page, 'certificate-verify-unknown')
    await context.close()
  })
})
