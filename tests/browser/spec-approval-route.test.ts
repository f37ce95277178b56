// An engineer submits a draft with a note; quality finds it awaiting approval on /specs, approves it with a note,
// signing with the password, and the note shows on the revision page.
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { call, DEMO_PASSWORD, signIn } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { startSecondServer } from '../support/second-server'

const PART = `BRA-${Date.now().toString(36).toUpperCase()}`
const SUBMIT_NOTE = 'Output power window widened after the new amplifier stage.'
const APPROVAL_NOTE = 'Checked against the stage characterisation; approved.'
let browser: Browser
let signing: { url: string; stop: () => void }
let draftId = 0

beforeAll(async () => {
  const engineer = await signIn('engineer@tercet.test')
  expect((await call('POST', '/api/products', { cookie: engineer, body: { partNumber: PART, name: 'Approval-route doubler', multiplier: 2, inputHz: 50e6, steps: ['final'] } })).status).toBe(201)
  const draft = await call('POST', `/api/products/${PART}/revisions`, { cookie: engineer })
  draftId = draft.body.id
  const limits = [{ step: 'final', name: 'output_power', lsl: 7, usl: 12, target: 10, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true }]
  expect((await call('PUT', `/api/revisions/${draftId}/limits`, { cookie: engineer, body: { limits } })).status).toBe(200)
  // a server whose sign-in never counts as a signature, so the approval asks for the password
  signing = await startSecondServer({ TERCET_SIGN_WINDOW_S: '0' })
  browser = await launchBrowser()
}, 120_000)

afterAll(async () => {
  await browser?.close()
  signing?.stop()
})

describe('a draft on its way to approval', () => {
  it('the engineer submits it with a note, quality sees it awaiting, approves with a note and a signature, and the note shows', async () => {
    const engineer = await signInPage(browser, signing.url, 'engineer@tercet.test')
    await engineer.goto(`${signing.url}/specs/revisions/${draftId}`)
    await hydrated(engineer)
    await engineer.getByLabel('Note for the approver').fill(SUBMIT_NOTE)
    await engineer.locator('[data-test=submit-draft]').click()
    await engineer.locator('[data-test=submission]').waitFor()
    expect(await engineer.locator('[data-test=submission]').textContent()).toContain(SUBMIT_NOTE)
    await expect.poll(() => engineer.locator('[data-test=submit-draft]').count()).toBe(0)
    await shot(engineer, 'spec-approval-1-submitted')
    await engineer.context().close()

    const quality = await signInPage(browser, signing.url, 'quality@tercet.test')
    await quality.goto(`${signing.url}/specs`)
    await hydrated(quality)
    const row = quality.locator('[data-test=awaiting-approval] tr', { hasText: PART })
    await row.waitFor()
    expect(await row.textContent()).toContain(SUBMIT_NOTE)
    expect(await row.textContent()).toContain('Milo Harrow')
    await shot(quality, 'spec-approval-2-awaiting')
    await row.getByRole('link', { name: /rev 1/ }).click()
    await quality.waitForURL(new RegExp(`/specs/revisions/${draftId}$`))
    await hydrated(quality)
    await quality.locator('#ap-note').fill(APPROVAL_NOTE)
    await quality.locator('[data-test=approve]').click()
    await quality.locator('[data-test=sign-prompt]').waitFor()
    await shot(quality, 'spec-approval-3-sign')
    await quality.locator('[data-test=sign-password]').fill(DEMO_PASSWORD)
    await quality.locator('[data-test=sign-submit]').click()
    await expect.poll(() => quality.locator('[data-test=revision-status]').textContent(), { timeout: 20_000 }).toMatch(/approved/i)
    await expect.poll(() => quality.locator('[data-test=approval-note]').textContent()).toContain(APPROVAL_NOTE)
    await shot(quality, 'spec-approval-4-approved')
    await quality.goto(`${signing.url}/specs`)
    await hydrated(quality)
    await quality.locator('[data-test=awaiting-approval]').waitFor()
    expect(await quality.locator('[data-test=awaiting-approval]').textContent()).not.toContain(PART)
    await quality.context().close()

    const audit = await call('GET', `/api/audit?entity=spec_revision&entityId=${draftId}&action=approve`, { cookie: await signIn('admin@tercet.test') })
    expect(audit.body.entries[0].after).toMatchObject({ note: APPROVAL_NOTE, signed: { method: 'password' } })
  })
})
