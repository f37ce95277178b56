import { writeFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { createHash, randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, ROLE_ACCOUNTS } from '../support/http'
import { ARTIFACTS, hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { tripleRun } from '../support/stations'

let browser: Browser
let db: Knex
beforeAll(async () => { browser = await launchBrowser(); db = createKnex(connectionFromEnv(), { min: 0, max: 2 }) })
afterAll(async () => { await browser?.close(); await db?.destroy() })

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
    await expect.poll(() => page.locator('[data-test=imports-table] tbody tr', { hasText: fileName }).count()).toBe(1)
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

  it('offers to resume a stalled import from its kept file, and says so when another server holds it', async () => {
    const id = randomUUID()
    const fileName = `stalled-${Date.now().toString(36)}.jsonl`
    const file = [tripleRun(), tripleRun(), tripleRun()].map((r) => JSON.stringify(r)).join('\n') + '\n'
    const station = await db('stations').where({ name: 'ATE-T3-01' }).first('id')
    const user = await db('users').where({ email: ROLE_ACCOUNTS.engineer }).first('id')
    const old = new Date(Date.now() - 10 * 60_000)
    // the lease first: a running job without one is free for any server's worker to take
    await db('job_leases').insert({ name: `import:${id.replace(/-/g, '')}`, owner: 'elsewhere:1:000000', lease_until: new Date(Date.now() + 120_000) })
    await db('import_jobs').insert({
      id, created_by: user.id, station_id: station.id, file_name: fileName, format: 'jsonl', started_at: old, updated_at: old, received_at: old,
      lines_total: 3, lines_done: 1, runs_done: 1, runs_created: 1, upload_bytes: file.length, upload_sha256: createHash('sha256').update(file).digest('hex'), upload_chunks: 1,
    })
    await db('import_upload_chunks').insert({ import_id: id, seq: 0, bytes: Buffer.from(file) })

    const page = await signInPage(browser, baseUrl(), ROLE_ACCOUNTS.admin)
    await page.goto(`${baseUrl()}/imports`)
    await hydrated(page)
    await page.locator('[data-test=imports-table] tbody tr', { hasText: fileName }).click()
    const stalled = page.locator('[data-test=import-stalled]')
    await expect.poll(() => stalled.textContent()).toContain('carries on after line 1 without uploading it again')
    await page.locator('[data-test=import-resume]').click()
    await expect.poll(() => page.locator('[data-test=import-error]').textContent()).toContain('Another server is carrying this import on')
    await shot(page, 'imports-stalled')
    await page.context().close()
    await db('job_leases').where({ name: `import:${id.replace(/-/g, '')}` }).update({ lease_until: new Date(Date.now() - 1) })
    await db('import_jobs').where({ id }).update({ status: 'cancelled', finished_at: new Date() })
  })
})
