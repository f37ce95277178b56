import { writeFileSync } from 'node:fs'
import { resolve } from 'node:path'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, ROLE_ACCOUNTS } from '../support/http'
import { ARTIFACTS, hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { tripleRun } from '../support/stations'

let browser: Browser
beforeAll(async () => { browser = await launchBrowser() })
afterAll(async () => { await browser?.close() })

describe('imports page', () => {
  it('uploads a file of runs, follows it to its end and lists its rejected line and the job', async () => {
    const fileName = `past-runs-${Date.now().toString(36)}.jsonl`
    const path = resolve(ARTIFACTS, fileName)
    const good = tripleRun()
    writeFileSync(path, `${JSON.stringify(good)}\n{ not json\n`)
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.admin)
    await page.goto(`${baseUrl()}/imports`)
    await hydrated(page)
    await page.getByLabel('Station the runs came from').selectOption('ATE-T3-01')
    await page.getByLabel('File').setInputFiles(path)
    expect(await page.getByLabel('Format').inputValue()).toBe('jsonl')
    await page.getByRole('button', { name: 'Import' }).click()
    await expect.poll(() => page.locator('[data-test=import-progress]').textContent(), { timeout: 30_000 }).toContain('Finished at')
    const counts = await page.locator('[data-test=import-counts] dd').allTextContents()
    // Runs counts every line read as a run, the rejected one too
    expect(counts).toEqual(['2', '1', '0', '1'])
    const rejections = page.locator('[data-test=import-rejections]')
    expect(await rejections.textContent()).toContain(`Rejected lines of ${fileName}`)
    expect(await rejections.locator('tbody tr').count()).toBe(1)
    expect(await rejections.locator('tbody td').first().textContent()).toBe('2')
    expect(await page.locator('[data-test=rejections-download]').getAttribute('href')).toMatch(/^\/api\/imports\/[^/]+\/rejections\.csv$/)
    await expect.poll(() => page.locator('[data-test=imports-table] tbody tr').first().textContent()).toContain(fileName)
    await shot(page, 'imports-finished')
    await page.context().close()
  })

  it('shows the server\'s refusal of a CSV without a known header beside the form', async () => {
    const path = resolve(ARTIFACTS, `bad-header-${Date.now().toString(36)}.csv`)
    writeFileSync(path, 'colour,flavour\nred,sweet\n')
    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.admin)
    await page.goto(`${baseUrl()}/imports`)
    await hydrated(page)
    await page.getByLabel('File').setInputFiles(path)
    expect(await page.getByLabel('Format').inputValue()).toBe('csv')
    await page.getByRole('button', { name: 'Import' }).click()
    await expect.poll(() => page.locator('[data-test=import-error]').textContent()).toContain('The CSV header does not fit')
    expect(await page.locator('[data-test=import-error] li').count()).toBeGreaterThan(0)
    await page.context().close()
  })
})
