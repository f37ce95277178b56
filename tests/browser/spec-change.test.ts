import { randomUUID } from 'node:crypto'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn } from '../support/http'
import { hydrated, launchBrowser, shot, signInPage } from '../support/browser'
import { stationTokens, uniqueSerial } from '../support/stations'

let browser: Browser
const PART = `BRW-${Date.now().toString(36).toUpperCase()}`
const LOT = `${PART}-L1`
const token = stationTokens()['ATE-D2-01']!

function run(power: number, at = Date.now()) {
  return {
    id: randomUUID(), serial: uniqueSerial('BR'), partNumber: PART, lot: LOT, step: 'final',
    startedAt: new Date(at).toISOString(), finishedAt: new Date(at + 1000).toISOString(),
    measurements: [{ name: 'output_power', value: power, unit: 'dBm' }],
  }
}

beforeAll(async () => {
  browser = await launchBrowser()
  const engineer = await signIn('engineer@tercet.test')
  const quality = await signIn('quality@tercet.test')
  expect((await call('POST', '/api/products', { cookie: engineer, body: { partNumber: PART, name: 'Browser-test doubler', multiplier: 2, inputHz: 50e6, steps: ['final'] } })).status).toBe(201)
  const draft = await call('POST', `/api/products/${PART}/revisions`, { cookie: engineer })
  const limits = [{ step: 'final', name: 'output_power', lsl: 8, usl: 12, target: 10, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true }]
  const put = await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: engineer, body: { limits } })
  expect(put.status, JSON.stringify(put.body)).toBe(200)
  expect((await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: quality, body: {} })).status).toBe(200)
}, 60_000)

afterAll(async () => { await browser?.close() })

describe('a limit change drafted by an engineer and approved by quality', () => {
  it('judges the lot\'s next run by the new limit and leaves earlier runs as they were judged', async () => {
    const before = await call('POST', '/api/v1/runs', { token, body: run(11.5) })
    expect(before.status).toBe(201)
    expect(before.body.verdict).toBe('pass')

    const engineer = await signInPage(browser, baseUrl(), 'engineer@tercet.test')
    await engineer.goto(`${baseUrl()}/specs/${PART}`)
    await hydrated(engineer)
    await engineer.getByRole('button', { name: 'New revision' }).click()
    await engineer.waitForURL(/\/specs\/revisions\/\d+/)
    const draftUrl = engineer.url()
    const usl = engineer.getByLabel('USL of row 1')
    await usl.fill('11')
    await engineer.getByRole('button', { name: 'Save limits' }).click()
    await expect.poll(async () => (await call('GET', `/api/revisions/${draftUrl.split('/').pop()}`, { cookie: await signIn('engineer@tercet.test') })).body.limits[0].usl).toBe(11)
    await shot(engineer, 'spec-draft-engineer')
    await engineer.context().close()

    const quality = await signInPage(browser, baseUrl(), 'quality@tercet.test')
    await quality.goto(draftUrl)
    await hydrated(quality)
    await quality.getByRole('button', { name: /Approve revision/ }).click()
    await expect.poll(() => quality.locator('[data-test="revision-status"]').textContent(), { timeout: 15_000 }).toMatch(/approved/i)
    await shot(quality, 'spec-approved-quality')
    await quality.context().close()

    const after = await call('POST', '/api/v1/runs', { token, body: run(11.5, Date.now() + 500) })
    expect(after.status).toBe(201)
    expect(after.body.revision).toBe(2)
    expect(after.body.verdict).toBe('fail')
    expect(after.body.measurements[0].limit.usl).toBe(11)

    const earlier = await call('GET', `/api/units/${before.body.serial}`, { cookie: await signIn('engineer@tercet.test') })
    const m = earlier.body.runs[0].measurements.find((x: any) => x.name === 'output_power')
    expect(m.limit.usl).toBe(12)
    expect(earlier.body.runs[0].verdict).toBe('pass')
  })
})
