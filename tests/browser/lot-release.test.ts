import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

let browser: Browser

beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('releasing a lot in the browser', () => {
  it('lists the units that are not ready and releases under a deviation with its reason', async () => {
    const lot = `T3-BR-${Date.now().toString(36)}`
    const serial = uniqueSerial('BR')
    const posted = await call('POST', '/api/v1/runs', { body: tripleRun({ lot, serial }), token: stationTokens()['ATE-T3-01']! })
    expect(posted.status).toBe(201)

    const page = await signInPage(browser, baseUrl(), 'quality@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/lots/${lot}`)
    await expect.poll(() => page.locator('[data-test="release-readiness"]').textContent(), { timeout: 20_000 }).toContain('1 of 1 unit not ready to release')
    await page.getByRole('button', { name: 'Release lot' }).click()
    const panel = page.locator('[data-test="release-not-ready"]')
    await expect.poll(() => panel.textContent(), { timeout: 20_000 }).toContain('Not ready to release: 1 of 1 units.')
    expect(await panel.textContent()).toContain(`${serial} · no result at tune; no result at burn-in`)
    await page.getByLabel('Release under deviation: reason').fill('Final-only rework units, by concession')
    await shot(page, 'lot-release-deviation')
    await page.getByRole('button', { name: 'Release under deviation' }).click()
    await expect.poll(() => page.locator('[data-test="lot-status"]').first().textContent(), { timeout: 20_000 }).toBe('Released')

    const audit = await call('GET', `/api/audit?entity=lot&entityId=${lot}`, { cookie: await signIn('quality@tercet.test') })
    expect(audit.body.entries[0].after.deviation).toMatchObject({ reason: 'Final-only rework units, by concession', serials: [serial] })
    expect(errors).toEqual([])
    await page.context().close()
  })
})
