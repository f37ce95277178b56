import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { faultEvents, sleep, startRig, type Rig } from './rig'
import { startLoad, untilStored } from './stations'

// Four stations post at a steady load while the database goes away: stopped cleanly for about 10 s, then killed
// outright for about 6 s. The API answers 503 with Retry-After within a few seconds meanwhile, the server takes
// runs again by itself, and the database ends with exactly the runs the stations were told were stored.
let rig: Rig
beforeAll(async () => { rig = await startRig() })
afterAll(async () => { await rig?.close() })

type Probe = { status: number | 'network'; ms: number; retryAfter: string | null; path: string; at: number; end: number }

/** Asks the API and a page every half second while the database is away: what they answer and how fast. */
function probeWhileDown(url: string, cookie: string) {
  const seen: Probe[] = []
  let on = true
  const one = async (path: string, headers: Record<string, string> = {}) => {
    const t0 = performance.now()
    const at = Date.now()
    try {
      const r = await fetch(url + path, { headers: { cookie, ...headers }, signal: AbortSignal.timeout(30_000), redirect: 'manual' })
      await r.text()
      seen.push({ status: r.status, ms: performance.now() - t0, retryAfter: r.headers.get('retry-after'), path, at, end: Date.now() })
    } catch {
      seen.push({ status: 'network', ms: performance.now() - t0, retryAfter: null, path, at, end: Date.now() })
    }
  }
  const loop = (async () => {
    while (on) {
      await Promise.all([one('/api/health'), one('/api/lots', { accept: 'application/json' }), one('/lots', { accept: 'text/html' })])
      await sleep(500)
    }
  })()
  return { seen, stop: async () => { on = false; await loop } }
}

async function signIn(url: string): Promise<string> {
  const signIns = (await import('../../../fixtures/demo-sign-ins.json')).default
  const r = await fetch(url + '/api/auth/login', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'admin@tercet.test', password: signIns.password }) })
  if (r.status !== 200) throw new Error(`sign-in failed: ${r.status}`)
  return r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
}

async function outage(how: 'clean' | 'kill', downMs: number, tag: string) {
  const cookie = await signIn(rig.app.url)
  const load = startLoad(rig, tag)
  await untilStored(load, 150)
  const probe = probeWhileDown(rig.app.url, cookie)
  const t0 = Date.now()
  await rig.stopDb(how)
  const downAt = Date.now()
  await sleep(downMs)
  const upAt = Date.now()
  await rig.startDb()
  const outageS = (Date.now() - t0) / 1000
  await untilStored(load, 150)
  await probe.stop()
  load.stop()
  await load.done
  const f = await load.figures(rig.db)
  // while the database was certainly away (down, and not yet being started again) every answer is 503 with
  // Retry-After: the API's, and a signed-in page's (the error page, not a redirect to the sign-in page)
  const whileDown = probe.seen.filter((p) => p.at >= downAt && p.end <= upAt)
  const probes = {
    whileDown: whileDown.length,
    answered503: whileDown.filter((p) => p.status === 503).length,
    without503RetryAfter: whileDown.filter((p) => p.status === 503 && !p.retryAfter).length,
    other: [
      ...whileDown.filter((p) => p.status !== 503).map((p) => `${p.path} ${p.status}`),
      // around the outage too, never a 5xx other than 503 nor a dropped connection
      ...probe.seen.filter((p) => p.status === 'network' || (p.status >= 500 && p.status !== 503)).map((p) => `${p.path} ${p.status}`),
    ],
    slowestMs: Math.round(Math.max(0, ...probe.seen.map((p) => p.ms))),
    pageStatuses: [...new Set(probe.seen.filter((p) => p.path === '/lots').map((p) => p.status))],
    pageStatusesWhileDown: [...new Set(whileDown.filter((p) => p.path === '/lots').map((p) => p.status))],
  }
  process.stdout.write(JSON.stringify({ test: `database ${how === 'clean' ? 'stopped' : 'killed'}`, outageS, ...f, probes }) + '\n')
  return { f, probes }
}

/** During the outage every probe answered 503 with Retry-After, quickly; stations lost, doubled or split nothing. */
function expectAnswered503AndNothingLost({ f, probes }: Awaited<ReturnType<typeof outage>>): void {
  expect(probes.answered503).toBeGreaterThan(0)
  expect(probes.without503RetryAfter).toBe(0)
  expect(probes.other).toEqual([])
  // no hang: every answer came within a few seconds, even while the database was away
  expect(probes.slowestMs).toBeLessThan(12_000)
  expect(f.other5xx).toBe(0)
  expect({ lost: f.lost, duplicated: f.duplicated, unacknowledged: f.unacknowledged, partialRuns: f.partialRuns }).toEqual({ lost: 0, duplicated: 0, unacknowledged: 0, partialRuns: 0 })
}

describe('the database away under load', () => {
  it('stopped cleanly for about 10 s: 503 with Retry-After meanwhile, no run lost or doubled', async () => {
    const outcome = await outage('clean', 10_000, 'FLT-STOP')
    expectAnswered503AndNothingLost(outcome)
    expect(outcome.f.answers503).toBeGreaterThan(0)
  })

  it('killed outright for about 6 s: the same, and the server reconnects by itself', async () => {
    expectAnswered503AndNothingLost(await outage('kill', 6_000, 'FLT-KILL'))
  })

  it('logged each outage once as it began and once as it ended, without stack traces, and every request as one JSON line', () => {
    const began = faultEvents(rig.app.err, 'database-unavailable')
    const ended = faultEvents(rig.app.err, 'database-available')
    process.stdout.write(JSON.stringify({ faultLog: { began: began.length, ended: ended.length, ends: ended } }) + '\n')
    expect(began.length).toBeGreaterThanOrEqual(2)
    expect(ended.length).toBe(began.length)
    expect(ended.filter((e) => e.answered503 > 0).length).toBeGreaterThanOrEqual(2)
    // no traces: a stack frame line anywhere in the server's output would be one
    expect(rig.app.err.filter((l) => /^\s+at /.test(l)).slice(0, 5)).toEqual([])
    const requests = rig.app.out.filter((l) => l.startsWith('{')).map((l) => JSON.parse(l))
    expect(requests.length).toBeGreaterThan(100)
    for (const r of requests.slice(0, 2000)) expect(Object.keys(r).sort()).toEqual(['id', 'method', 'ms', 'path', 'status'])
    const everything = rig.app.out.join('\n') + rig.app.err.join('\n')
    for (const token of Object.values(rig.tokens)) expect(everything).not.toContain(token)
    expect(everything).not.toMatch(/Bearer|authorization|cookie|nuxt-session/i)
  })
})
