import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call } from '../support/http'
import { launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

let browser: Browser
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('unit page in the browser', () => {
  it('shows the phase-noise excess over the multiplied reference and the harmonics of the input', async () => {
    const serial = uniqueSerial('BRF')
    const reference = { frequencyHz: 125_000_050, phaseNoise: [{ offsetHz: 100, value: -128 }, { offsetHz: 1000, value: -148 }, { offsetHz: 10000, value: -158 }, { offsetHz: 100000, value: -163 }, { offsetHz: 1000000, value: -165 }] }
    const traces = [{ name: 'phase_noise_sweep', points: [[100, -118], [1000, -138], [3162.3, -136.5], [10000, -148], [100000, -153], [1000000, -155]] }]
    const posted = await call('POST', '/api/v1/runs', { body: tripleRun({ serial, reference, traces }), token: stationTokens()['ATE-T3-01']! })
    expect(posted.status).toBe(201)

    const page = await signInPage(browser, baseUrl(), 'engineer@tercet.test', { width: 1440, height: 900 })
    const errors: string[] = []
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl()}/units/${serial}`)

    const excess = page.getByRole('table', { name: 'Phase-noise excess over the multiplied reference' })
    await expect.poll(() => excess.locator('tbody tr').count(), { timeout: 20_000 }).toBe(5)
    expect(await excess.locator('thead').textContent()).toContain('Reference + 9.54 dB')
    // 1 kHz: measured −137, reference −148, expected −138.46, excess +1.46 dB (×3 adds 20·log10(3) = 9.54 dB, common practice)
    const at1k = (await excess.locator('tbody tr').nth(1).allTextContents()).join(' ')
    // levels to 0.1 dB and differences to 0.01 dB, with the minus sign U+2212, as every page writes them
    expect(at1k).toMatch(/1 kHz.*−137\.0.*−148\.0.*−138\.5.*\+1\.46/s)

    const harmonics = page.getByRole('table', { name: 'Harmonic rejection by harmonic of the input' })
    expect(await harmonics.locator('tbody tr').count()).toBe(3)
    const cells = async (i: number) => (await harmonics.locator('tbody tr').nth(i).locator('td').allTextContents()).map((t) => t.replace(/\s+/g, ' ').trim()).join(' | ')
    const rows = [await cells(0), await cells(1), await cells(2)]
    expect(rows[0]).toBe('H1 | 125 MHz | 38.00 | ≥ 30.00 | PASS')
    expect(rows[1]).toBe('H2 | 250 MHz | 33.00 | ≥ 28.00 | PASS')
    expect(rows[2]).toBe('H4 | 500 MHz | 45.00 | ≥ 35.00 | PASS')

    // the sweep is 2.5 dB over the mask at 3.16 kHz: the derived margin fails the run, shown with where it lies
    const margin = page.locator('[data-test="measurements"] tr[data-name="phase_noise_mask_margin"]')
    expect((await margin.textContent())?.replace(/\s+/g, ' ')).toMatch(/Phase-noise mask margin at 3\.1623 kHz.*−2\.50.*FAIL/)
    expect(await page.locator('[data-test="reference-frequency"]').textContent()).toContain('agrees')

    await page.waitForTimeout(300)
    await shot(page, 'unit-rf-checks')
    expect(errors).toEqual([])
    await page.context().close()
  })
})
