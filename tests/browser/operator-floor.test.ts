// The operator's main journey on a wall screen: sign in, go to the floor, see a failing run arrive, open it and read
// which parameters failed, with values and limits. Times are checked against Intl's own reading of the plant's clock.
import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, ROLE_ACCOUNTS } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, tripleRun } from '../support/stations'

let browser: Browser
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

/** HH:MM:SS on the demo plant's clock (Europe/Berlin), as Intl reads it. */
const berlinClock = (iso: string) => new Date(iso).toLocaleTimeString('en-GB', { timeZone: 'Europe/Berlin', hour12: false })

async function fitsWithoutScrolling(page: Page) {
  const size = await page.evaluate(() => ({ scroll: document.documentElement.scrollHeight, inner: window.innerHeight, scrollW: document.documentElement.scrollWidth, innerW: window.innerWidth }))
  expect(size.scroll, 'the floor scrolls vertically').toBeLessThanOrEqual(size.inner)
  expect(size.scrollW, 'the floor scrolls sideways').toBeLessThanOrEqual(size.innerW)
}

function failingRun() {
  // tested three minutes before it is posted (finished 90 s later): the station's latest run, but not its arrival time
  const startedAt = new Date(Date.now() - 3 * 60_000).toISOString()
  const run = tripleRun({ startedAt, finishedAt: new Date(Date.parse(startedAt) + 90_000).toISOString(), stationVerdict: 'fail' })
  // the demo tripler's final step allows 5.5–8.5 dBm output power and 55–100 mA supply current
  run.measurements = run.measurements.map((m) => (m.name === 'output_power' ? { ...m, value: 4.2 } : m.name === 'supply_current' ? { ...m, value: 112 } : m))
  return run
}

describe('the operator on the floor', () => {
  for (const viewport of [{ width: 1440, height: 900 }, { width: 1920, height: 1080 }]) {
    it(`sees a failing run arrive and opens its failing parameters (${viewport.width}×${viewport.height})`, async () => {
      const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.operator, viewport)
      await hydrated(page)
      await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Floor' }).click()
      await page.waitForURL((u) => u.pathname === '/floor')
      await hydrated(page)
      await expect.poll(() => page.locator('[data-test=link-state]').textContent(), { timeout: 15_000 }).toBe('LIVE')

      const run = failingRun()
      const posted = await call('POST', '/api/v1/runs', { body: run, token: stationTokens()['ATE-T3-01']! })
      expect(posted.status, JSON.stringify(posted.body)).toBe(201)
      const entry = page.locator('[data-test=feed] li', { hasText: run.serial })
      await expect.poll(() => entry.count(), { timeout: 15_000 }).toBe(1)
      // newest arrival first
      expect(await page.locator('[data-test=feed] li').first().textContent()).toContain(run.serial)
      const text = (await entry.textContent())!
      expect(text).toContain('FAIL')
      expect(text).toContain('2 failed')
      // the test time on the plant's clock, with UTC on hover
      expect(text).toContain(`tested ${berlinClock(run.startedAt)}`)
      const tested = entry.locator('[data-test=feed-times] time').nth(1)
      expect(await tested.getAttribute('title')).toBe(`${new Date(run.startedAt).toISOString().slice(0, 19).replace('T', ' ')} UTC`)
      const arrived = await entry.locator('[data-test=feed-times] time').first().getAttribute('datetime')
      expect(text).toContain(`arrived ${berlinClock(arrived!)}`)
      await fitsWithoutScrolling(page)
      await shot(page, `floor-${viewport.width}x${viewport.height}`)

      await entry.getByRole('button').click()
      const panel = page.locator('[data-test=floor-run]')
      await expect.poll(() => panel.locator('[data-test=failing-parameters] tbody tr').count(), { timeout: 10_000 }).toBe(2)
      expect(await panel.getByRole('heading', { level: 2 }).textContent()).toBe(run.serial)
      const rows = await panel.locator('[data-test=failing-parameters] tbody tr').allTextContents()
      const power = rows.find((r) => r.includes('Output power'))!
      expect(power).toMatch(/4\.20.*5\.50.*8\.50.*dBm/)
      const current = rows.find((r) => r.includes('Supply current'))!
      expect(current).toMatch(/112\.00.*55\.00.*100\.00.*mA/)
      expect(await panel.locator('[data-test=floor-run-unit]').getAttribute('href')).toBe(`/units/${encodeURIComponent(run.serial)}?part=VFW-T3-375`)
      await fitsWithoutScrolling(page)
      await shot(page, `floor-run-${viewport.width}x${viewport.height}`)

      await page.keyboard.press('Escape')
      await expect.poll(() => panel.count()).toBe(0)
      // the station's latest verdict opens the same run
      const station = page.locator('[data-station="ATE-T3-01"]')
      await expect.poll(() => station.textContent()).toContain(run.serial)
      await station.locator('[data-test=station-last-run]').click()
      await expect.poll(() => panel.locator('[data-test=failing-parameters] tbody tr').count(), { timeout: 10_000 }).toBe(2)
      await panel.locator('[data-test=floor-run-close]').click()
      await expect.poll(() => panel.count()).toBe(0)
      expect(await page.locator('[data-test=link-state]').textContent()).toBe('LIVE')
      await page.context().close()
    })
  }
})
