// An engineer writes a rule, follows it, sees its alert counted in the header and acknowledges it with a note.
import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, DEMO_PASSWORD, signIn, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { newUser } from '../support/accounts'
import { makePart } from '../support/shipping'
import { insertFiring, productId } from '../support/alerts'

const tag = Date.now().toString(36).toUpperCase()
const P = `ABR-${tag}`.slice(0, 30)
const RULE = `Power capability ${tag}`
let browser: Browser
let db: Knex
let email = ''

beforeAll(async () => {
  browser = await launchBrowser()
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  await makePart(P)
  // a fresh engineer, so the header counts only what this test raises
  email = (await newUser(await signIn(ROLE_ACCOUNTS.admin), { tag: 'alerts-browser', password: DEMO_PASSWORD, name: 'Ines Valcourt', role: 'engineer' })).email
})
afterAll(async () => { await browser?.close(); await db?.destroy() })

describe('alerts pages', () => {
  it('creates and follows a rule, counts its alert in the header, and acknowledges it with a note', async () => {
    const page = await signInPage(browser, baseUrl(), email, { width: 1440, height: 900 })
    await page.goto(`${baseUrl()}/alerts/rules`)
    await hydrated(page)
    await page.locator('[data-test=new-rule]').click()
    await page.getByLabel('Name').fill(RULE)
    await page.getByLabel('Kind').selectOption('cpk_low')
    await page.getByLabel('Product').selectOption(P)
    const parameter = page.getByLabel('Parameter (approved specification)')
    await expect.poll(() => parameter.locator('option').count()).toBeGreaterThan(1)
    await parameter.selectOption({ label: 'Output power · final · dBm' })
    // the form shows only what a capability rule reads
    expect(await page.getByLabel('Silent for, minutes').isVisible()).toBe(false)
    expect(await page.getByLabel('Station').count()).toBe(0)
    await page.getByLabel('Cpk below').fill('1.33')
    await expect.poll(() => page.locator('[data-test=rule-preview]').textContent()).toContain('Cpk of output power at final below 1.33 over the last 30 units')
    await shot(page, 'alerts-rule-form')
    await page.getByRole('button', { name: 'Create rule' }).click()

    const row = page.locator('[data-test=rule-table] tr', { hasText: RULE })
    await row.waitFor()
    await row.locator('[data-test=follow-toggle]').click()
    await expect.poll(() => row.locator('[data-test=follow-toggle]').getAttribute('aria-pressed')).toBe('true')
    await expect.poll(() => page.locator('[data-test=alert-badge-count]').textContent()).toBe('0')
    await shot(page, 'alerts-rules')

    const rule = (await call('GET', `/api/alert-rules?product=${P}`, { cookie: await signIn(email) })).body.rules.find((r: any) => r.name === RULE)
    await insertFiring(db, {
      ruleId: rule.id, productId: await productId(db, P), subjectLabel: `${P} · Output power at final`, summary: 'Cpk 0.94 over the last 30 units, below 1.33',
      figures: [{ label: 'Cpk', value: 0.9412, unit: null }, { label: 'Mean', value: 10.83, unit: 'dBm' }, { label: 'Units', value: 30, unit: null }],
      link: `/trends?part=${P}&name=output_power&step=final`,
    })
    // a page change refreshes the count
    await page.goto(`${baseUrl()}/alerts/rules`)
    await hydrated(page)
    await expect.poll(() => page.locator('[data-test=alert-badge-count]').textContent(), { timeout: 10_000 }).toBe('1')
    await page.locator('[data-test=alert-badge]').click()
    await page.waitForURL((u) => u.pathname === '/alerts' && u.searchParams.get('mine') === '1')
    const card = page.locator('[data-test=alert-card]', { hasText: RULE })
    await card.waitFor()
    expect(await card.locator('[data-test=alert-figures]').textContent()).toContain('10.83\u00a0dBm')
    expect(await card.getByRole('link', { name: /Show the chart/ }).getAttribute('href')).toContain(`/trends?part=${P}`)
    await shot(page, 'alerts-open')

    await card.locator('[data-test=acknowledge]').click()
    await card.getByLabel('What did you find? (optional)').fill('Attenuator pad on the test head was loose; re-torqued.')
    await card.getByRole('button', { name: 'Acknowledge', exact: true }).click()
    await expect.poll(() => card.textContent()).toContain('Acknowledged by Ines Valcourt')
    expect(await card.locator('[data-test=alert-comments]').textContent()).toContain('re-torqued')
    await expect.poll(() => page.locator('[data-test=alert-badge-count]').textContent()).toBe('0')
    await shot(page, 'alerts-acknowledged')
    // the list also renders on the server when opened directly
    await page.goto(`${baseUrl()}/alerts?state=acknowledged&mine=1`)
    await hydrated(page)
    expect(await page.locator('[data-test=alert-card]', { hasText: RULE }).textContent()).toContain('re-torqued')
    await page.context().close()
  })

  it('follows a product from its specification page and a station from its page', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.admin)
    const admin = await signIn(ROLE_ACCOUNTS.admin)
    const station = (await call('GET', '/api/stations', { cookie: admin })).body.stations[0]
    const followed = async () => (await call('GET', '/api/me/alert-subscriptions', { cookie: admin })).body.subscriptions.map((x: any) => `${x.target}:${x.targetId}`)
    const before = await followed()
    const pid = await productId(db, P)
    await page.goto(`${baseUrl()}/specs/${P}`)
    await hydrated(page)
    const toggle = page.locator('[data-test=follow-toggle]')
    expect(await toggle.getAttribute('aria-pressed')).toBe('false')
    await toggle.click()
    await expect.poll(() => toggle.getAttribute('aria-pressed')).toBe('true')
    expect(await followed()).toContain(`product:${pid}`)
    await shot(page, 'alerts-follow-product')
    // an administrator's header holds every page and the alert count on one line of a 1280-pixel screen
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(1280)
    expect(await page.locator('header').evaluate((h) => h.getBoundingClientRect().height)).toBeLessThan(60)
    await page.goto(`${baseUrl()}/stations/${station.id}`)
    await hydrated(page)
    const stationToggle = page.locator('[data-test=follow-toggle]')
    const was = await stationToggle.getAttribute('aria-pressed')
    await stationToggle.click()
    await expect.poll(() => stationToggle.getAttribute('aria-pressed')).toBe(was === 'true' ? 'false' : 'true')
    expect((await followed()).includes(`station:${station.id}`)).toBe(was !== 'true')
    expect(before).not.toContain(`product:${pid}`)
    await shot(page, 'alerts-follow-station')
    await page.context().close()
  })
})
