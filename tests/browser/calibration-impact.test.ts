// Quality opens the review of an instrument found out of tolerance, decides every unit and tells the customer.
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, tripleRun } from '../support/stations'

const DAY = 86_400_000
const tag = `CB${Date.now().toString(36)}`.toUpperCase()
const midnight = (() => { const n = new Date(); return Date.UTC(n.getUTCFullYear(), n.getUTCMonth(), n.getUTCDate()) })()
const day = (n: number) => new Date(midnight - n * DAY)
const asset = `IMB-${tag}`.slice(0, 32)
let browser: Browser
let db: Knex
let impactId = 0

beforeAll(async () => {
  browser = await launchBrowser()
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  const engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const made = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: asset, kind: 'Phase noise analyser', model: 'PN-40', serial: `S-${tag}` } })
  const calibrate = (asFound: string, n: number) => call('POST', `/api/instruments/${made.body.instrument.id}/calibrations`, {
    cookie: engineer, body: { certificateNumber: `CAL-${tag}-${n}`, laboratory: 'Invented Metrology Lab', asFound, calibratedOn: day(n).toISOString().slice(0, 10), dueAt: day(-300).toISOString().slice(0, 10) },
  })
  expect((await calibrate('in_tolerance', 8)).status).toBe(201)
  for (const [serial, lot, n] of [['A1', 'A', 5], ['A2', 'A', 4], ['B1', 'B', 3]] as const) {
    const at = day(n)
    const body = tripleRun({ serial: `${tag}-${serial}`, lot: `${tag}-${lot}`, startedAt: at.toISOString(), finishedAt: new Date(at.getTime() + 90_000).toISOString(), instrumentAssets: [asset] })
    expect((await call('POST', '/api/v1/runs', { token: stationTokens()['ATE-T3-01']!, body })).status).toBe(201)
  }
  const [customerId] = await db('customers').insert({ code: `B${tag}`.slice(0, 32), name: `Brightwater Avionics ${tag}` })
  await db('customer_contacts').insert({ customer_id: customerId, name: 'Odile Fenn', email: `odile.${tag}@brightwater.example`.toLowerCase(), receives_certificates: true })
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const [shipmentId] = await db('shipments').insert({ code: `SH-${tag}`, customer_id: customerId, status: 'released', released_at: new Date() })
  for (const serial of ['A1', 'A2']) {
    const unit = await db('units').where({ serial: `${tag}-${serial}` }).first('id')
    await db('shipment_units').insert({ shipment_id: shipmentId, unit_id: unit.id })
    await db('certificates').insert({
      number: `T-${tag}-${serial}`, verify_code: randomBytes(16).toString('hex').toUpperCase(), unit_id: unit.id, shipment_id: shipmentId, customer_id: customerId,
      status: 'valid', template_version: 1, snapshot: '{}', issued_at: new Date(), issued_by: quality.id, render_lease_owner: 'test', render_lease_until: new Date(Date.now() + 3_600_000),
    })
  }
  const found = await calibrate('out_of_tolerance', 1)
  expect(found.status).toBe(201)
  impactId = found.body.record.impactId
}, 120_000)
afterAll(async () => { await browser?.close(); await db?.destroy() })

describe('a calibration impact review in the browser', () => {
  it('quality opens the review, decides each unit and a whole lot, sends the notice signed and closes it', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.quality, { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/calibration-impacts`)
    await hydrated(page)
    await page.getByRole('link', { name: asset }).click()
    await page.waitForURL(`**/calibration-impacts/${impactId}`)
    await hydrated(page)
    await expect.poll(() => page.locator('[data-test="impact-counts"]').textContent(), { timeout: 20_000 }).toMatch(/3\s*runs\s*3\s*units\s*2\s*lots\s*2\s*valid certificates/)
    await shot(page, 'calibration-impact-open')

    // the two certified units of lot A: no impact, ticked together
    await page.locator('[data-serial] input[type="checkbox"]').nth(0).check()
    await page.locator('[data-serial] input[type="checkbox"]').nth(1).check()
    await page.locator('[data-test="impact-decision"]').selectOption('no_impact')
    await page.locator('[data-test="impact-apply"]').click()
    await expect.poll(() => page.locator('[data-test="impact-decide"]').textContent(), { timeout: 20_000 }).toContain('2 changed')

    // lot B recalled as a whole: the reason is required first
    await page.locator('[data-test="impact-decision"]').selectOption('recall')
    await page.getByLabel('or every unit of lot').selectOption(`${tag}-B`)
    expect(await page.locator('[data-test="impact-apply-lot"]').isDisabled()).toBe(true)
    await page.locator('[data-test="impact-reason"]').fill('Output power margin below the analyser error')
    await page.locator('[data-test="impact-apply-lot"]').click()
    await expect.poll(() => page.locator(`[data-serial="${tag}-B1"]`).textContent(), { timeout: 20_000 }).toContain('Recall')

    await page.locator('[data-test="impact-send"]').click()
    const prompt = page.locator('[data-test="sign-prompt"]')
    if (await prompt.isVisible()) {
      await page.locator('[data-test="sign-password"]').fill((await import('../support/http')).DEMO_PASSWORD)
      await page.locator('[data-test="sign-submit"]').click()
    }
    await expect.poll(() => page.locator('[data-test="impact-sent"]').textContent(), { timeout: 20_000 }).toContain(`Queued for Brightwater Avionics ${tag}: 2 units, 1 recipient.`)
    await shot(page, 'calibration-impact-decided')

    await page.locator('[data-test="impact-close"]').click()
    await expect.poll(() => page.locator('[data-test="impact-status"]').textContent(), { timeout: 20_000 }).toBe('closed')
    const row = await db('mail_outbox').where('to', 'like', `%odile.${tag.toLowerCase()}@%`).first()
    expect(row.text).toContain(`T-${tag}-A1`)
    expect(row.text).toContain(`T-${tag}-A2`)
    expect(row.text).not.toContain(`${tag}-B1`)
    await shot(page, 'calibration-impact-closed')
    expect(errors).toEqual([])
    await page.context().close()
  })

  it('an engineer follows the station page\'s "Review impact" to the demo analyser\'s review and reads it without decision controls', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer, { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    const stations = await call('GET', '/api/stations', { cookie: await signIn(ROLE_ACCOUNTS.engineer) })
    const d2 = stations.body.stations.find((s: any) => s.name === 'ATE-D2-01')
    await page.goto(`${baseUrl()}/stations/${d2.id}`)
    await hydrated(page)
    await expect.poll(() => page.locator('tr[data-record="BML-26-0093"]').textContent(), { timeout: 20_000 }).toContain('outside tolerance')
    await page.locator('tr[data-record="BML-26-0093"] [data-test="review-impact"]').click()
    await page.waitForURL('**/calibration-impacts/*')
    await expect.poll(() => page.locator('[data-test="impact-lots"]').textContent(), { timeout: 20_000 }).toContain('D2-2611-A')
    expect(await page.locator('[data-test="impact-summary"]').textContent()).toContain('VFW-SA-0417')
    expect(await page.locator('[data-test="impact-decide"]').count()).toBe(0)
    expect(await page.locator('[data-test="impact-send"]').count()).toBe(0)
    expect(await page.locator('[data-test="impact-notices"]').textContent()).toContain('Saltmarsh')
    await shot(page, 'calibration-impact-demo-engineer')
    expect(errors).toEqual([])
    await page.context().close()
  })
})
