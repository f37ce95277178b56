import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, tripleRun } from '../support/stations'

let browser: Browser
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('floor page', () => {
  it('shows stations and open lots from the snapshot, goes live, and adds a run posted meanwhile to the feed and to its station', async () => {
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.operator, { width: 1920, height: 1080 })
    await page.goto(`${baseUrl()}/floor`)
    await hydrated(page)
    await expect.poll(() => page.locator('[data-test=link-state]').textContent(), { timeout: 15_000 }).toBe('LIVE')
    expect(await page.locator('[data-station="ATE-T3-01"]').count()).toBe(1)
    expect(await page.locator('[data-lot]').count()).toBeGreaterThan(0)
    expect(await page.locator('[data-lot]').first().textContent()).toContain('first pass')

    const run = tripleRun({ startedAt: new Date(Date.now() - 60_000).toISOString(), finishedAt: new Date(Date.now() - 1_000).toISOString() })
    expect((await call('POST', '/api/v1/runs', { body: run, token: stationTokens()['ATE-T3-01']! })).status).toBe(201)
    const item = page.locator('[data-test=feed] li', { hasText: run.serial })
    await expect.poll(() => item.count(), { timeout: 15_000 }).toBe(1)
    expect(await item.textContent()).toContain('ATE-T3-01')
    await expect.poll(() => page.locator('[data-station="ATE-T3-01"]').textContent()).toContain(run.serial)
    await shot(page, 'floor-live')
    await page.context().close()
  })
})
