import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { pdfWithText } from '../support/pdf'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

const pdf = () => pdfWithText('Certificate of calibration, browser test')

describe('station calibration history in the browser', () => {
  it('shows the demo ×8 station\'s instruments, the lapsed sensor and the runs taken under each record', async () => {
    const engineer = await signIn('engineer@tercet.test')
    const x8 = (await call('GET', '/api/stations', { cookie: engineer })).body.stations.find((s: any) => s.name === 'ATE-X8-01')
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/stations/${x8.id}`)
    const sensor = page.locator('[data-asset="VFW-PS-2262"]')
    await expect.poll(() => sensor.textContent(), { timeout: 20_000 }).toContain('CCS-2025-1044')
    expect(await sensor.locator('[data-state]').first().getAttribute('data-state')).toBe('lapsed')
    expect(await sensor.locator('[data-test="record-runs"]').first().textContent()).toMatch(/at or past due/)
    const analyser = page.locator('[data-asset="VFW-SA-0440"]')
    expect(await analyser.locator('[data-record="BML-25-1302"]').textContent()).toContain('in force')
    expect(await analyser.locator('[data-record="BML-24-0815"]').textContent()).toContain('replaced or expired')
    await page.getByRole('button', { name: /this station held before/ }).click()
    await expect.poll(() => page.locator('[data-asset="VFW-PS-2207"]').textContent(), { timeout: 10_000 }).toContain('on no station now')
    await shot(page, 'station-calibration-ATE-X8-01')

    // the latest ×8-lot run under the lapsed record opens on the unit page, which names the certificate and its due date
    const latest = sensor.locator('[data-test="record-runs"] li', { hasText: 'X8-2611-A' }).first()
    const serial = ((await latest.locator('a').textContent()) ?? '').trim()
    await latest.locator('a').click()
    await page.waitForURL(new RegExp(`/units/${serial}`))
    const panel = page.locator('article[data-run]').last().locator('[data-test="run-instruments"]')
    await expect.poll(() => panel.locator('[data-asset="VFW-PS-2262"]').textContent(), { timeout: 20_000 }).toContain('CCS-2025-1044')
    expect(await panel.locator('[data-asset="VFW-PS-2262"]').textContent()).toContain('past due at this run')
    expect(await panel.locator('[data-asset="VFW-SA-0440"]').textContent()).toContain('BML-25-1302')
    await shot(page, 'unit-run-instruments')
    expect(errors).toEqual([])
    await page.context().close()
  })

  it('registers an instrument, adds a record with its PDF and supersedes it through the forms', async () => {
    const engineer = await signIn('engineer@tercet.test')
    const tag = Date.now().toString(36).toUpperCase()
    const created = await call('POST', '/api/stations', { cookie: engineer, body: { name: `BR-CAL-${tag}` } })
    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/stations/${created.body.station.id}`)
    const add = page.locator('[data-test="instrument-add"]')
    await add.getByLabel('Asset number').fill(`BR-${tag}`)
    await add.getByLabel('Kind').fill('Power sensor')
    await add.getByLabel('Model').fill('PS-18 thermal sensor')
    await add.getByLabel('Serial').fill('PS18-BR1')
    await add.getByRole('button', { name: 'Register and install' }).click()
    const card = page.locator(`[data-asset="BR-${tag}"]`)
    await expect.poll(() => card.count(), { timeout: 20_000 }).toBe(1)
    expect(await card.textContent()).toContain('No calibration records')

    await card.getByRole('button', { name: 'Add calibration record' }).click()
    const form = card.locator('[data-test="calibration-add"]')
    await form.getByLabel('Certificate number').fill(`BRC-${tag}`)
    await form.getByLabel('Laboratory').fill('Invented Metrology Lab')
    const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10)
    await form.getByLabel('Calibrated on (UTC)').fill(day(-10))
    await form.getByLabel('Due (UTC)').fill(day(355))
    await form.getByLabel(/Certificate PDF/).setInputFiles({ name: 'certificate.pdf', mimeType: 'application/pdf', buffer: await pdf() })
    await form.getByRole('button', { name: 'Add record' }).click()
    const row = card.locator(`[data-record="BRC-${tag}"]`)
    await expect.poll(() => row.textContent(), { timeout: 20_000 }).toContain('in force')
    expect(await row.locator('[data-test="certificate-link"]').textContent()).toMatch(/PDF, \d+ KiB/)

    await row.getByRole('button', { name: 'Supersede…' }).click()
    const sup = card.locator('[data-test="calibration-supersede"]')
    await sup.getByLabel('Reason').fill('Entered against the wrong sensor')
    await sup.getByRole('button', { name: 'Supersede record' }).click()
    await expect.poll(() => row.textContent(), { timeout: 20_000 }).toContain('Entered against the wrong sensor')
    await shot(page, 'station-calibration-forms')
    expect(errors).toEqual([])
    await page.context().close()
  })
})
