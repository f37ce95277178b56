// Read-your-writes across instances and nodes: instance A reaches the cluster through HAProxy (one node), instance B
// is wired straight to another node. What is changed through A holds through B at B's very next request: a revoked
// station token, an approved revision, a disabled user, and the sign-in limit, which both count together.
import { randomUUID } from 'node:crypto'
import type { ChildProcess } from 'node:child_process'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
// @ts-expect-error plain ES module without types
import { startInstance } from '../../scripts/lib/cluster-apps.mjs'
import { freePort } from '../reliability/faults/rig'
import { outputPowerRun } from '../support/stations'
import { startClusterRig, type ClusterRig } from './rig'

let rig: ClusterRig
let A: string
let B: string
let direct: ChildProcess | undefined
const signIns = { password: '' }

beforeAll(async () => {
  rig = await startClusterRig()
  signIns.password = (await import('../../fixtures/demo-sign-ins.json')).default.password
  A = rig.instances[0]!.url
  // B reads and writes on node 3 itself, while A's connections go through HAProxy to node 1
  const port = await freePort()
  direct = await startInstance({ ...rig.appEnv, NUXT_DB_PORT: String(rig.cluster.node(3).port) }, port, { stdio: ['ignore', 'ignore', 'inherit'] })
  B = `http://127.0.0.1:${port}`
  expect(rig.onNode(3, 'SELECT @@port').trim()).toBe(String(rig.cluster.node(3).port))
})
afterAll(async () => {
  direct?.kill('SIGKILL')
  await rig?.close()
})

let address = 0
// every sign-in from an address of its own, so that only the account's limit counts
const freshAddress = () => `198.51.100.${(++address % 250) + 1}`

async function call(base: string, method: string, path: string, opts: { body?: unknown; token?: string; cookie?: string } = {}) {
  const headers: Record<string, string> = { accept: 'application/json', 'x-forwarded-for': freshAddress() }
  if (opts.token) headers.authorization = `Bearer ${opts.token}`
  if (opts.cookie) headers.cookie = opts.cookie
  if (opts.body !== undefined) headers['content-type'] = 'application/json'
  const r = await fetch(base + path, { method, headers, body: opts.body === undefined ? undefined : JSON.stringify(opts.body) })
  const text = await r.text()
  return { status: r.status, body: text ? JSON.parse(text) : null, cookie: r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ') }
}

async function signIn(base: string, email: string, password = signIns.password): Promise<string> {
  const r = await call(base, 'POST', '/api/auth/login', { body: { email, password } })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.cookie
}

describe('two instances on two nodes of the cluster', () => {
  it('refuses through B a station token revoked through A, at the very next request', async () => {
    const admin = await signIn(A, 'admin@tercet.test')
    const created = await call(A, 'POST', '/api/stations', { cookie: admin, body: { name: `CX-${randomUUID().slice(0, 8)}` } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const token = created.body.token as string
    // B verifies the token and keeps it (a body the schema refuses: the token was accepted first)
    expect((await call(B, 'POST', '/api/v1/runs', { token, body: { not: 'a run' } })).status).toBe(400)
    expect((await call(A, 'DELETE', `/api/stations/${created.body.station.id}/token`, { cookie: admin })).status).toBe(200)
    expect((await call(B, 'POST', '/api/v1/runs', { token, body: { not: 'a run' } })).status).toBe(401)
  })

  it('judges the next run posted through B by a revision approved through A', async () => {
    const [admin, engineer, quality] = [await signIn(A, 'admin@tercet.test'), await signIn(A, 'engineer@tercet.test'), await signIn(A, 'quality@tercet.test')]
    const station = await call(A, 'POST', '/api/stations', { cookie: admin, body: { name: `CX-${randomUUID().slice(0, 8)}` } })
    const token = station.body.token as string
    const part = `CX-${Date.now().toString(36)}`
    expect((await call(A, 'POST', '/api/products', { cookie: engineer, body: { partNumber: part, name: 'Cluster doubler', multiplier: 2, inputHz: 50e6, steps: ['final'] } })).status).toBe(201)
    const approve = async (lsl: number, usl: number) => {
      const draft = await call(A, 'POST', `/api/products/${part}/revisions`, { cookie: engineer })
      expect(draft.status, JSON.stringify(draft.body)).toBe(201)
      const limits = [{ step: 'final', name: 'output_power', lsl, usl, target: null, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true }]
      expect((await call(A, 'PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: engineer, body: { limits } })).status).toBe(200)
      const ok = await call(A, 'POST', `/api/revisions/${draft.body.id}/approve`, { cookie: quality, body: {} })
      expect(ok.status, JSON.stringify(ok.body)).toBe(200)
      return new Date(ok.body.effectiveAt).getTime()
    }
    const first = await approve(8, 12)
    const before = await call(B, 'POST', '/api/v1/runs', { token, body: outputPowerRun(part, `${part}-L1`, first + 10, 12.5) })
    expect(before.status, JSON.stringify(before.body)).toBe(201)
    expect([before.body.revision, before.body.verdict]).toEqual([1, 'fail'])
    const second = await approve(10.5, 13)
    const after = await call(B, 'POST', '/api/v1/runs', { token, body: outputPowerRun(part, `${part}-L1`, second + 10, 12.5) })
    expect(after.status, JSON.stringify(after.body)).toBe(201)
    expect([after.body.revision, after.body.verdict]).toEqual([2, 'pass'])
  })

  it('refuses through B a user disabled through A, and counts sign-in failures on both against one limit', async () => {
    const admin = await signIn(A, 'admin@tercet.test')
    const email = `cx-${randomUUID().slice(0, 8)}@tercet.test`
    const made = await call(A, 'POST', '/api/users', { cookie: admin, body: { email, name: 'Cluster Person', role: 'operator', password: 'a cluster phrase' } })
    expect(made.status, JSON.stringify(made.body)).toBe(201)
    const session = await signIn(B, email, 'a cluster phrase')
    expect((await call(B, 'GET', '/api/me', { cookie: session })).status).toBe(200)
    expect((await call(A, 'PATCH', `/api/users/${made.body.user.id}`, { cookie: admin, body: { disabled: true } })).status).toBe(200)
    expect((await call(B, 'GET', '/api/me', { cookie: session })).status).toBe(401)

    const other = `cx-${randomUUID().slice(0, 8)}@tercet.test`
    expect((await call(A, 'POST', '/api/users', { cookie: admin, body: { email: other, name: 'Cluster Limit', role: 'operator', password: 'the proper phrase' } })).status).toBe(201)
    const statuses: number[] = []
    for (let i = 0; i < 5; i++) statuses.push((await call(i % 2 ? B : A, 'POST', '/api/auth/login', { body: { email: other, password: `wrong ${i}` } })).status)
    expect(statuses).toEqual([401, 401, 401, 401, 401])
    expect((await call(B, 'POST', '/api/auth/login', { body: { email: other, password: 'the proper phrase' } })).status).toBe(429)
    expect((await call(A, 'POST', '/api/auth/login', { body: { email: other, password: 'the proper phrase' } })).status).toBe(429)
  })
})
