import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, freshAddress, signIn } from '../support/http'
import { newUser } from '../support/accounts'
import { startSecondServer } from '../support/second-server'
import { outputPowerRun, tripleRun } from '../support/stations'

// Two app instances on one database (A: the suite's server, B: a second built server). Each keeps per-process caches
// of station tokens, products and limits; a change made through A must hold through B at B's very next request,
// with no waiting in between (the caches check the counters of cache_versions on every request).

let B: { url: string; stop: () => void }
let admin: string
let engineer: string
let quality: string
beforeAll(async () => {
  B = await startSecondServer({})
  ;[admin, engineer, quality] = await Promise.all([signIn('admin@tercet.test'), signIn('engineer@tercet.test'), signIn('quality@tercet.test')])
}, 60_000)
afterAll(() => { B?.stop() })

/** A request to the other instance. */
async function callB(method: string, path: string, opts: { body?: unknown; token?: string; cookie?: string } = {}) {
  const headers: Record<string, string> = { accept: 'application/json' }
  if (opts.token) headers.authorization = `Bearer ${opts.token}`
  if (opts.cookie) headers.cookie = opts.cookie
  if (opts.body !== undefined) headers['content-type'] = 'application/json'
  const r = await fetch(B.url + path, { method, headers, body: opts.body === undefined ? undefined : JSON.stringify(opts.body) })
  const text = await r.text()
  return { status: r.status, body: text ? JSON.parse(text) : null }
}

async function approve(part: string, power: { lsl: number; usl: number }, effectiveAt?: string): Promise<{ effectiveAt: number; revision: number }> {
  const draft = await call('POST', `/api/products/${part}/revisions`, { cookie: engineer })
  expect(draft.status, JSON.stringify(draft.body)).toBe(201)
  const limits = [{ step: 'final', name: 'output_power', ...power, target: null, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true }]
  expect((await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: engineer, body: { limits } })).status).toBe(200)
  const ok = await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: quality, body: effectiveAt ? { effectiveAt } : {} })
  expect(ok.status, JSON.stringify(ok.body)).toBe(200)
  return { effectiveAt: new Date(ok.body.effectiveAt).getTime(), revision: ok.body.revision }
}

describe('two app instances on one database', () => {
  it('a station token revoked through A is refused through B on the very next request; its new token works on B at once', async () => {
    const created = await call('POST', '/api/stations', { cookie: admin, body: { name: `XI-${randomUUID().slice(0, 8)}` } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const id = created.body.station.id
    const first = created.body.token as string
    // B verifies the token and keeps it (a body the schema refuses: the token was accepted first)
    const warm = await callB('POST', '/api/v1/runs', { token: first, body: { not: 'a run' } })
    expect(warm.status).toBe(400)
    // rotated through A: the first token is revoked, a second one issued
    const rotated = await call('POST', `/api/stations/${id}/token`, { cookie: admin })
    expect(rotated.status).toBe(201)
    const refused = await callB('POST', '/api/v1/runs', { token: first, body: { not: 'a run' } })
    expect(refused.status).toBe(401)
    expect((await callB('POST', '/api/v1/runs', { token: rotated.body.token, body: { not: 'a run' } })).status).toBe(400)
    // revoked through A: refused through B at once, again with no wait
    expect((await call('DELETE', `/api/stations/${id}/token`, { cookie: admin })).status).toBe(200)
    expect((await callB('POST', '/api/v1/runs', { token: rotated.body.token, body: { not: 'a run' } })).status).toBe(401)
  })

  it('a part created and a revision approved through A judge the next run posted through B', async () => {
    const station = await call('POST', '/api/stations', { cookie: admin, body: { name: `XI-${randomUUID().slice(0, 8)}` } })
    const token = station.body.token as string
    // short, like the demo's part numbers: the floor's lot column gives a part number no line break at 1440 px
    const part = `XI${Date.now().toString(36).slice(-5)}`
    const lot = `${part}-L1`
    // B learns that the part does not exist (and may keep that)
    const unknown = await callB('POST', '/api/v1/runs', { token, body: outputPowerRun(part, lot, Date.now() - 60_000, 10) })
    expect(unknown.status).toBe(422)
    expect(unknown.body.errors.map((e: { pointer: string }) => e.pointer)).toContain('/partNumber')
    const created = await call('POST', '/api/products', { cookie: engineer, body: { partNumber: part, name: 'Two-instance doubler', multiplier: 2, inputHz: 50e6, steps: ['final'] } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const rev1 = await approve(part, { lsl: 8, usl: 12 })
    // 12.5 dBm fails revision 1 (8–12 dBm): B judges by revision 1 and keeps the limits
    const before = await callB('POST', '/api/v1/runs', { token, body: outputPowerRun(part, lot, rev1.effectiveAt + 10, 12.5) })
    expect(before.status, JSON.stringify(before.body)).toBe(201)
    expect(before.body.revision).toBe(1)
    expect(before.body.verdict).toBe('fail')
    // revision 2 (10.5–13 dBm) approved through A, in force from now
    const rev2 = await approve(part, { lsl: 10.5, usl: 13 })
    expect(rev2.revision).toBe(2)
    const after = await callB('POST', '/api/v1/runs', { token, body: outputPowerRun(part, lot, rev2.effectiveAt + 10, 12.5) })
    expect(after.status, JSON.stringify(after.body)).toBe(201)
    expect(after.body.revision).toBe(2)
    expect(after.body.verdict).toBe('pass')
  })

  it('a user disabled through A is refused through B at once', async () => {
    const u = await newUser(admin, { tag: 'xinst-disable', password: 'two instance phrase', name: 'Two Instances', role: 'operator' })
    const login = await fetch(`${B.url}/api/auth/login`, {
      method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': freshAddress() },
      body: JSON.stringify({ email: u.email, password: 'two instance phrase' }),
    })
    expect(login.status).toBe(200)
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
    expect((await callB('GET', '/api/me', { cookie })).status).toBe(200)
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { disabled: true } })).status).toBe(200)
    expect((await callB('GET', '/api/me', { cookie })).status).toBe(401)
  })

  it('sign-in failures spread over A and B reach one limit', async () => {
    const u = await newUser(admin, { tag: 'xinst-limit', password: 'the proper phrase', name: 'Limit Shared', role: 'operator' })
    const attempt = async (url: string, password: string) => (await fetch(`${url}/api/auth/login`, {
      method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': freshAddress() }, body: JSON.stringify({ email: u.email, password }),
    })).status
    const statuses: number[] = []
    for (let i = 0; i < 5; i++) statuses.push(await attempt(i % 2 ? B.url : baseUrl(), `wrong ${i}`))
    // three failures on A and two on B: neither instance alone saw five
    expect(statuses).toEqual([401, 401, 401, 401, 401])
    expect(await attempt(B.url, 'the proper phrase')).toBe(429)
    expect(await attempt(baseUrl(), 'the proper phrase')).toBe(429)
  })

  // last: it stops B
  it('a floor stream cut off with its instance goes on through the other one from its last event id', async () => {
    const operator = await signIn('operator@tercet.test')
    const station = await call('POST', '/api/stations', { cookie: admin, body: { name: `XI-${randomUUID().slice(0, 8)}` } })
    const token = station.body.token as string
    const ac = new AbortController()
    const onB = await fetch(`${B.url}/api/floor/stream`, { headers: { cookie: operator, accept: 'text/event-stream' }, signal: ac.signal })
    expect(onB.status).toBe(200)
    const fromB = await readSse(onB, (e) => e.some((x) => x.event === 'snapshot'))
    const lastId = fromB.find((x) => x.event === 'snapshot')!.id!
    expect(lastId).toMatch(/^\d+\.\d+$/)
    ac.abort()
    B.stop()
    // posted through A while the wall has no stream
    const body = tripleRun({ lot: 'T3-XI-FLOOR' })
    const stored = await call('POST', '/api/v1/runs', { token, body })
    expect(stored.status, JSON.stringify(stored.body)).toBe(201)
    // the browser comes back through A with Last-Event-ID: the run arrives as a run event, not only in the snapshot
    const ac2 = new AbortController()
    const onA = await fetch(`${baseUrl()}/api/floor/stream`, { headers: { cookie: operator, accept: 'text/event-stream', 'last-event-id': lastId }, signal: ac2.signal })
    try {
      const events = await readSse(onA, (e) => e.some((x) => x.event === 'run' && x.data.serial === body.serial))
      expect(events.filter((x) => x.event === 'run' && x.data.serial === body.serial)).toHaveLength(1)
    } finally { ac2.abort() }
  })
})

type Sse = { event: string; data: any; id?: string }

/** Reads server-sent events until `done` holds for those read (or 15 s pass, which fails the test). */
async function readSse(res: Response, done: (events: Sse[]) => boolean): Promise<Sse[]> {
  const reader = res.body!.getReader()
  const decoder = new TextDecoder()
  const events: Sse[] = []
  let buffer = ''
  const deadline = Date.now() + 15_000
  while (!done(events)) {
    const left = deadline - Date.now()
    if (left <= 0) throw new Error(`no such events within 15 s: ${JSON.stringify(events.map((e) => e.event))}`)
    const chunk = await Promise.race([reader.read(), new Promise<null>((r) => setTimeout(() => r(null), left))])
    if (!chunk || chunk.done) continue
    buffer += decoder.decode(chunk.value, { stream: true })
    let cut: number
    while ((cut = buffer.indexOf('\n\n')) >= 0) {
      const block = buffer.slice(0, cut)
      buffer = buffer.slice(cut + 2)
      const e: Partial<Sse> & { lines: string[] } = { lines: [] }
      for (const line of block.split('\n')) {
        if (line.startsWith('event:')) e.event = line.slice(6).trim()
        else if (line.startsWith('data:')) e.lines.push(line.slice(5).trimStart())
        else if (line.startsWith('id:')) e.id = line.slice(3).trim()
      }
      if (e.lines.length) events.push({ event: e.event ?? 'message', data: JSON.parse(e.lines.join('\n')), id: e.id })
    }
  }
  return events
}
