import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser
const PART = `BRW-${Date.now().toString(36).toUpperCase()}`
let draftId = 0

beforeAll(async () => {
  browser = await launchBrowser()
  const engineer = await signIn(ROLE_ACCOUNTS.engineer)
  expect((await call('POST', '/api/products', { cookie: engineer, body: { partNumber: PART, name: 'Browser doubler', multiplier: 2, inputHz: 50e6, steps: ['tune', 'final'] } })).status).toBe(201)
  const draft = await call('POST', `/api/products/${PART}/revisions`, { cookie: engineer })
  draftId = draft.body.id
  const limits = [
    { step: 'final', name: 'output_power', lsl: 8, usl: 12, target: 10, unit: 'dBm' },
    ...[[100, -110], [1e3, -130], [1e4, -140], [1e5, -145]].map(([f, u]) => ({ step: 'final', name: 'phase_noise', qualifier: f, usl: u, unit: 'dBc/Hz' })),
  ]
  expect((await call('PUT', `/api/revisions/${draftId}/limits`, { cookie: engineer, body: { limits } })).status).toBe(200)
})
afterAll(async () => { await browser?.close() })

describe('specification pages', () => {
  it('the limit editor flags LSL above USL as it is typed and saves once fixed', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/specs/revisions/${draftId}`)
    const lsl = page.getByLabel('LSL of row 1')
    await lsl.fill('13')
    await expect.poll(() => page.locator('[data-test=limit-errors]').textContent()).toContain('Row 1 · USL: must be above the LSL (13)')
    expect(await page.locator('[data-test=save-limits]').isDisabled()).toBe(true)
    await shot(page, 'spec-editor-error')
    await lsl.fill('8.5')
    await expect.poll(() => page.locator('[data-test=limit-errors]').count()).toBe(0)
    await page.locator('[data-test=save-limits]').click()
    await expect.poll(async () => (await call('GET', `/api/revisions/${draftId}`, { cookie: await signIn(ROLE_ACCOUNTS.engineer) })).body.limits[0].lsl).toBe(8.5)
    await page.context().close()
  })

  it('a quality engineer sees the mask chart and approves the draft', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.quality)
    await page.goto(`${baseUrl()}/specs/revisions/${draftId}`)
    await page.locator('.apexcharts-svg').first().waitFor()
    expect(await page.locator('.apexcharts-xaxis-label').allTextContents()).toEqual(expect.arrayContaining(['100 Hz', '1 kHz', '10 kHz', '100 kHz']))
    await page.locator('[data-test=approve]').click()
    await expect.poll(() => page.locator('[data-test=revision-status]').textContent()).toContain('approved')
    await shot(page, 'spec-revision-approved')
    await page.goto(`${baseUrl()}/specs`)
    await expect.poll(() => page.locator('[data-test=spec-overview]').textContent()).toContain(PART)
    await page.context().close()
  })
})

describe('lot units and audit pages', () => {
  it('the units table sorts and filters on the server', async () => {
    // the drifting demo lot is the one with failing units
    const failing = (await call('GET', '/api/lots/T3-2612-B/units?verdict=fail', { cookie: await signIn(ROLE_ACCOUNTS.engineer) })).body.total
    expect(failing).toBeGreaterThan(0)
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.engineer)
    await page.goto(`${baseUrl()}/lots/T3-2612-B/units`)
    const firstSerial = () => page.locator('[data-test=units-table] tbody tr').first().locator('td').first().textContent()
    await page.locator('[data-test=units-table] tbody tr').first().waitFor()
    const ascending = await firstSerial()
    await page.getByRole('button', { name: /^Serial/ }).click()
    await expect.poll(firstSerial).not.toBe(ascending)
    await page.locator('#f-verdict').selectOption('fail')
    await expect.poll(async () => {
      const chips = await page.locator('[data-test=units-table] tbody tr td:nth-child(2)').allTextContents()
      return chips.length === Math.min(failing, 50) && chips.every((c) => c.trim() === 'FAIL')
    }).toBe(true)
    await shot(page, 'lot-units-failing')
    await page.context().close()
  })

  it('the audit log lists the approval for a quality engineer', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.quality)
    await page.goto(`${baseUrl()}/audit?entity=spec_revision&entityId=${draftId}`)
    await expect.poll(() => page.locator('[data-test=audit-table]').textContent()).toContain('approve')
    await shot(page, 'audit-log')
    await page.context().close()
  })
})
