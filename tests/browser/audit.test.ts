import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'

let browser: Browser
const PART = `AUD-${Date.now().toString(36).toUpperCase()}`
let draftId = 0

beforeAll(async () => {
  browser = await launchBrowser()
  const engineer = await signIn(ROLE_ACCOUNTS.engineer)
  expect((await call('POST', '/api/products', { cookie: engineer, body: { partNumber: PART, name: 'Audit tripler', multiplier: 3, inputHz: 40e6, steps: ['final'] } })).status).toBe(201)
  draftId = (await call('POST', `/api/products/${PART}/revisions`, { cookie: engineer })).body.id
  const power = (usl: number) => ({ step: 'final', name: 'output_power', lsl: 8, usl, target: 10, unit: 'dBm' })
  expect((await call('PUT', `/api/revisions/${draftId}/limits`, { cookie: engineer, body: { limits: [power(12)] } })).status).toBe(200)
  // the second save widens the upper limit and adds a limit: the entry to read
  const noise = { step: 'final', name: 'phase_noise', qualifier: 1000, usl: -130, unit: 'dBc/Hz' }
  expect((await call('PUT', `/api/revisions/${draftId}/limits`, { cookie: engineer, body: { limits: [power(13), noise] } })).status).toBe(200)
})
afterAll(async () => { await browser?.close() })

describe('audit log', () => {
  it('names entries as the pages do and links them', async () => {
    const audit = await call('GET', `/api/audit?entity=spec_revision&entityId=${draftId}`, { cookie: await signIn(ROLE_ACCOUNTS.quality) })
    expect(audit.status).toBe(200)
    expect(audit.body.entries.map((e: any) => e.subject)).toContainEqual({ kind: 'Specification', name: `${PART} rev 1`, detail: 'Audit tripler', href: `/specs/revisions/${draftId}` })
    const lots = await call('GET', '/api/audit?entity=lot&pageSize=1', { cookie: await signIn(ROLE_ACCOUNTS.quality) })
    for (const e of lots.body.entries) expect(e.subject).toMatchObject({ kind: 'Lot', name: e.entityId, href: `/lots/${encodeURIComponent(e.entityId)}` })
  })

  it('shows what an entry changed, before against after', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.quality)
    await page.goto(`${baseUrl()}/audit?entity=spec_revision&entityId=${draftId}&action=limits_replace`)
    await hydrated(page)
    const rows = page.locator('[data-test=audit-table] tbody tr[data-entry]')
    await expect.poll(() => rows.count()).toBe(2)
    // newest first: the second save
    const newest = rows.first()
    expect(await newest.locator('[data-test=audit-subject] a').textContent()).toBe(`${PART} rev 1`)
    expect(await newest.locator('[data-test=audit-subject] a').getAttribute('href')).toBe(`/specs/revisions/${draftId}`)
    await newest.getByRole('button', { name: 'Before / after' }).click()
    const change = page.locator('[data-test=audit-change]')
    await change.waitFor()
    const changed = change.locator('tr[data-change=changed]')
    expect(await changed.allTextContents()).toEqual(expect.arrayContaining([expect.stringMatching(/limits › #1 › usl\s*changed\s*12\s*13/)]))
    expect(await change.locator('tr[data-change=added]').allTextContents()).toEqual(expect.arrayContaining([expect.stringMatching(/limits › #2 › name\s*added\s*—\s*phase_noise/)]))
    await shot(page, 'audit-before-after')
    await page.context().close()
  })
})
