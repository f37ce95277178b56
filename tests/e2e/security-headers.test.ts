// The response headers every answer carries, the page Content-Security-Policy with its per-request nonce, and the
// nuxt-security filters the app leaves off (its own limits and validation answer instead).
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { testedShipment, type CertifiedSet } from '../support/certified-units'
import { baseUrl, freshAddress, signIn } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

let db: Knex
let shipped: CertifiedSet
const cookies: Record<string, string> = {}

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  shipped = await testedShipment(db, { tag: `SH${Date.now().toString(36).toUpperCase()}`, count: 1, customer: 'QUILL' })
  cookies.engineer = await signIn('engineer@tercet.test')
  cookies.customer = await signIn('buyer@quillfeather.test')
})
afterAll(async () => { await db?.destroy() })

async function get(path: string, o: { cookie?: string; accept?: string; headers?: Record<string, string> } = {}) {
  const headers: Record<string, string> = { accept: o.accept ?? 'text/html', 'x-forwarded-for': freshAddress(), ...o.headers }
  if (o.cookie) headers.cookie = o.cookie
  const r = await fetch(baseUrl() + path, { headers, redirect: 'manual' })
  return { status: r.status, headers: r.headers, text: await r.text() }
}

/** The page policy as directive → sources. */
function directives(csp: string | null): Record<string, string[]> {
  expect(csp, 'Content-Security-Policy header').toBeTruthy()
  return Object.fromEntries(csp!.split(';').map((d) => d.trim()).filter(Boolean).map((d) => { const [name, ...sources] = d.split(/\s+/); return [name!, sources] }))
}

/** What every answer carries, page or API, success or error. */
function expectCommonHeaders(h: Headers) {
  expect(h.get('x-content-type-options')).toBe('nosniff')
  expect(h.get('x-frame-options')).toBe('DENY')
  expect(h.get('referrer-policy')).toBe('same-origin')
  expect(h.get('x-powered-by')).toBeNull()
  // the test server speaks plain HTTP: no HSTS (see the HTTPS case below)
  expect(h.get('strict-transport-security')).toBeNull()
  // same-origin app: no CORS grant to anyone
  expect(h.get('access-control-allow-origin')).toBeNull()
}

/** A server-rendered page: the strict policy, and every script and style tag carrying this response's nonce. */
function expectPagePolicy(r: { headers: Headers; text: string }): string {
  expectCommonHeaders(r.headers)
  const d = directives(r.headers.get('content-security-policy'))
  const nonce = (d['script-src'] ?? []).map((s) => /^'nonce-([A-Za-z0-9+/=_-]+)'$/.exec(s)?.[1]).find(Boolean)
  expect(nonce, 'script-src nonce').toBeTruthy()
  expect(d['script-src']).toEqual(["'self'", `'nonce-${nonce}'`])
  expect(d['style-src']).toEqual(["'self'", `'nonce-${nonce}'`])
  expect(d['script-src-attr']).toEqual(["'none'"])
  expect(d['style-src-attr']).toEqual(["'unsafe-inline'"])
  expect(d['default-src']).toEqual(["'self'"])
  for (const name of ['img-src', 'font-src', 'connect-src', 'base-uri', 'form-action']) expect(d[name], name).toEqual(["'self'"])
  expect(d['object-src']).toEqual(["'none'"])
  expect(d['frame-ancestors']).toEqual(["'none'"])
  expect(Object.values(d).flat().join(' ')).not.toMatch(/unsafe-eval|https?:|\*|data:/)
  expect(d['upgrade-insecure-requests']).toBeUndefined()

  const scripts = [...r.text.matchAll(/<script\b[^>]*>/g)].map((m) => m[0])
  const inline = scripts.filter((s) => !/\ssrc=/.test(s))
  expect(inline.length).toBeGreaterThan(0)
  for (const tag of [...scripts, ...[...r.text.matchAll(/<style\b[^>]*>/g)].map((m) => m[0])]) expect(tag).toContain(`nonce="${nonce}"`)
  return nonce!
}

describe('server-rendered pages', () => {
  it('send the strict policy with a fresh nonce each time, the same nonce the inline scripts carry', async () => {
    const nonces = new Set<string>()
    for (const path of ['/login', '/login', '/lots/T3-2611-A', '/trends', '/stations/compare']) {
      const r = await get(path, { cookie: path === '/login' ? undefined : cookies.engineer })
      expect(r.status, path).toBe(200)
      nonces.add(expectPagePolicy(r))
      expect(r.headers.get('content-type')).toMatch(/^text\/html/)
    }
    expect(nonces.size).toBe(5)
  })

  it('cover the portal and the public certificate verification page', async () => {
    const unit = shipped.units[0]!
    const portal = await get(`/portal/units/VFW-T3-375/${encodeURIComponent(unit.serial)}`, { cookie: cookies.customer })
    expect(portal.status).toBe(200)
    expectPagePolicy(portal)
    const verify = await get(`/verify/${shipped.issued[0]!.verifyCode}`)
    expect(verify.status).toBe(200)
    expectPagePolicy(verify)
  })

  it('cover the error page, with the nonce of the page actually sent', async () => {
    const r = await get('/no-such-page-here', { cookie: cookies.engineer })
    expect(r.status).toBe(404)
    expect(r.text).toContain('data-test="error-page"')
    expectPagePolicy(r)
  })

  it('fill the nonce into the policy of a redirect too', async () => {
    const r = await get('/lots')
    expect(r.status).toBe(302)
    expectCommonHeaders(r.headers)
    const csp = r.headers.get('content-security-policy')!
    expect(csp).not.toContain('{{')
    expect(directives(csp)['frame-ancestors']).toEqual(["'none'"])
  })

  it('add Strict-Transport-Security only to requests that came over HTTPS through the declared proxy', async () => {
    const r = await get('/login', { headers: { 'x-forwarded-proto': 'https' } })
    expect(r.headers.get('strict-transport-security')).toBe('max-age=31536000')
    const api = await get('/api/health', { accept: 'application/json', headers: { 'x-forwarded-proto': 'https' } })
    expect(api.headers.get('strict-transport-security')).toBe('max-age=31536000')
    expect((await get('/login', { headers: { 'x-forwarded-proto': 'http' } })).headers.get('strict-transport-security')).toBeNull()
  })
})

describe('API answers', () => {
  const API_CSP = "default-src 'none'; frame-ancestors 'none'"

  it('JSON, problem+json and event streams carry the common headers and a policy that loads nothing', async () => {
    const json = await get('/api/lots', { cookie: cookies.engineer, accept: 'application/json' })
    expect(json.status).toBe(200)
    expect(json.headers.get('content-type')).toMatch(/^application\/json/)
    const problem = await get('/api/lots/NO-SUCH-LOT-X/summary', { cookie: cookies.engineer, accept: 'application/json' })
    expect(problem.status).toBe(404)
    expect(problem.headers.get('content-type')).toBe('application/problem+json')
    const unsigned = await get('/api/lots', { accept: 'application/json' })
    expect(unsigned.status).toBe(401)
    const stream = await get('/api/floor/stream?once=1', { cookie: cookies.engineer, accept: 'text/event-stream' })
    expect(stream.status).toBe(200)
    expect(stream.headers.get('content-type')).toMatch(/^text\/event-stream/)
    expect(stream.text).toContain('event: snapshot')
    for (const r of [json, problem, unsigned, stream]) {
      expectCommonHeaders(r.headers)
      expect(r.headers.get('content-security-policy')).toBe(API_CSP)
    }
  })

  it('CSV and PDF downloads arrive whole as attachments with the same headers', async () => {
    const csv = await get('/api/lots/T3-2611-A/units.csv', { cookie: cookies.engineer, accept: 'text/csv' })
    expect(csv.status).toBe(200)
    expect(csv.headers.get('content-type')).toMatch(/^text\/csv/)
    expect(csv.headers.get('content-disposition')).toMatch(/^attachment;/)
    expect(csv.text.split('\n').length).toBeGreaterThan(2)

    const number = shipped.issued[0]!.number
    const r = await fetch(`${baseUrl()}/api/certificates/${encodeURIComponent(number)}.pdf`, { headers: { cookie: cookies.customer } })
    const bytes = Buffer.from(await r.arrayBuffer())
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toBe('application/pdf')
    expect(r.headers.get('content-disposition')).toMatch(/^attachment;/)
    expect(bytes.subarray(0, 5).toString('latin1')).toBe('%PDF-')
    for (const h of [csv.headers, r.headers]) {
      expectCommonHeaders(h)
      expect(h.get('content-security-policy')).toBe(API_CSP)
    }
  })
})

describe('nuxt-security filters left to the app', () => {
  const post = (path: string, body: unknown) => fetch(`${baseUrl()}${path}`, {
    method: 'POST', body: JSON.stringify(body),
    headers: { authorization: `Bearer ${stationTokens()['ATE-T3-01']}`, 'content-type': 'application/json', accept: 'application/json' },
  })

  it('a station batch over 2 MB reaches the app, which stores its good run and refuses the oversized field itself', async () => {
    const good = tripleRun()
    const r = await post('/api/v1/runs/batch', { runs: [good, tripleRun({ operator: 'x'.repeat(3_000_000) })] })
    expect(r.status).toBe(200)
    expectCommonHeaders(r.headers)
    const { results } = await r.json()
    expect(results.map((x: { status: number }) => x.status)).toEqual([201, 400])
    expect(results[1].errors[0].pointer).toBe('/runs/1/operator')
  })

  it('a station run whose operator name holds markup characters is stored as sent, not refused as markup', async () => {
    const r = await post('/api/v1/runs', tripleRun({ operator: 'K. <Ames> & "QA"' }))
    expect(r.status).toBe(201)
    expectCommonHeaders(r.headers)
  })

  it('a search for text with markup characters is answered by the search (no blanket refusal)', async () => {
    const r = await get(`/api/search?q=${encodeURIComponent('<T3-2611>')}`, { cookie: cookies.engineer, accept: 'application/json' })
    expect(r.status).toBe(200)
    expectCommonHeaders(r.headers)
  })
})
