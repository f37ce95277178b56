import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, freshAddress, signIn } from '../support/http'
import { newUser } from '../support/accounts'
import { startSecondServer } from '../support/second-server'

// Sessions are sealed cookies carrying the user's session version; every request compares it with the users row,
// so ending sessions (password change or reset, disabling, signing out everywhere) holds on every instance at once.

let db: Knex
let admin: string
let other: { url: string; stop: () => void }
beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn('admin@tercet.test')
  // a second instance on the same database, with no proxy declared (so X-Forwarded-Proto is not believed)
  other = await startSecondServer({ TERCET_TRUST_PROXY: '0' })
}, 60_000)
afterAll(async () => {
  other?.stop()
  await db.destroy()
})

type SignedIn = { cookie: string; setCookie: string[] }

async function signInAt(url: string, email: string, password: string, headers: Record<string, string> = {}): Promise<SignedIn> {
  const r = await fetch(`${url}/api/auth/login`, {
    method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': freshAddress(), ...headers },
    body: JSON.stringify({ email, password }),
  })
  expect(r.status).toBe(200)
  const setCookie = r.headers.getSetCookie()
  return { cookie: setCookie.map((c) => c.split(';')[0]).join('; '), setCookie }
}

const meAt = async (url: string, cookie: string) => (await fetch(`${url}/api/me`, { headers: { cookie, accept: 'application/json' } })).status

/** The attributes of the one session cookie a response sets, lower-cased names. */
function sessionCookieAttributes(setCookie: string[]): { value: string; attrs: Map<string, string> } {
  const ours = setCookie.filter((c) => c.startsWith('nuxt-session='))
  expect(ours).toHaveLength(1)
  const [first, ...rest] = ours[0]!.split(';').map((p) => p.trim())
  const attrs = new Map(rest.map((p) => { const [k, v = ''] = p.split('='); return [k!.toLowerCase(), v] }))
  return { value: first!.slice('nuxt-session='.length), attrs }
}

describe('ending sessions', () => {
  it('a password change ends the user\'s other sessions on every instance; the changing one goes on with a fresh cookie', async () => {
    const u = await newUser(admin, { tag: 'two-sessions', password: 'first phrase of two', name: 'Two Sessions', role: 'engineer' })
    const here = await signInAt(baseUrl(), u.email, 'first phrase of two')
    const there = await signInAt(other.url, u.email, 'first phrase of two')
    expect(await meAt(baseUrl(), here.cookie)).toBe(200)
    expect(await meAt(other.url, there.cookie)).toBe(200)

    const change = await fetch(`${baseUrl()}/api/me/password`, {
      method: 'POST', headers: { cookie: here.cookie, 'content-type': 'application/json', 'x-forwarded-for': freshAddress() },
      body: JSON.stringify({ currentPassword: 'first phrase of two', newPassword: 'second phrase of two' }),
    })
    expect(change.status).toBe(200)
    const fresh = sessionCookieAttributes(change.headers.getSetCookie())
    const freshCookie = `nuxt-session=${fresh.value}`

    // the other session, on the other instance, is refused on its very next request
    const refused = await fetch(`${other.url}/api/me`, { headers: { cookie: there.cookie, accept: 'application/json' } })
    expect(refused.status).toBe(401)
    expect(refused.headers.get('content-type')).toContain('application/problem+json')
    // and on this instance too, as is the changing session's own old cookie
    expect(await meAt(baseUrl(), there.cookie)).toBe(401)
    expect(await meAt(baseUrl(), here.cookie)).toBe(401)
    // the session that changed the password goes on, on both instances
    expect(await meAt(baseUrl(), freshCookie)).toBe(200)
    expect(await meAt(other.url, freshCookie)).toBe(200)
  })

  it('disabling a user ends their session at once, and enabling them again does not revive it', async () => {
    const u = await newUser(admin, { tag: 'disable-now', password: 'phrase before disabling', name: 'Disabled Soon', role: 'operator' })
    const s = await signInAt(other.url, u.email, 'phrase before disabling')
    expect(await meAt(other.url, s.cookie)).toBe(200)
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { disabled: true } })).status).toBe(200)
    // no waiting: the other instance reads the user on every request
    expect(await meAt(other.url, s.cookie)).toBe(401)
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { disabled: false } })).status).toBe(200)
    expect(await meAt(other.url, s.cookie)).toBe(401)
    const again = await signInAt(baseUrl(), u.email, 'phrase before disabling')
    expect(await meAt(other.url, again.cookie)).toBe(200)
  })

  it('an administrator setting a user\'s password ends that user\'s sessions', async () => {
    const u = await newUser(admin, { tag: 'admin-reset', password: 'phrase the admin replaces', name: 'Admin Reset', role: 'operator' })
    const s = await signInAt(baseUrl(), u.email, 'phrase the admin replaces')
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { password: 'phrase the admin chose' } })).status).toBe(200)
    expect(await meAt(baseUrl(), s.cookie)).toBe(401)
    // a change of name alone leaves sessions alone
    const t = await signInAt(baseUrl(), u.email, 'phrase the admin chose')
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { name: 'Admin Reset Renamed' } })).status).toBe(200)
    expect(await meAt(baseUrl(), t.cookie)).toBe(200)
  })

  it('a password reset by e-mailed link ends every session of the user', async () => {
    const u = await newUser(admin, { tag: 'reset-ends', password: 'phrase forgotten later', name: 'Reset Ends', role: 'engineer' })
    const s = await signInAt(other.url, u.email, 'phrase forgotten later')
    expect((await call('POST', '/api/auth/password-reset', { body: { email: u.email }, headers: { 'x-forwarded-for': freshAddress() } })).status).toBe(202)
    const row = (await db('mail_outbox').where('template', 'passwordReset').orderBy('id', 'desc').limit(50))
      .find((r) => (typeof r.to === 'string' ? JSON.parse(r.to) : r.to).includes(u.email))
    const token = /\/reset-password\/([A-Za-z0-9_-]+)/.exec(row.text)![1]!
    const done = await call('POST', '/api/auth/password-reset/confirm', { body: { token, newPassword: 'phrase set by the link' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(done.status).toBe(200)
    expect(await meAt(other.url, s.cookie)).toBe(401)
  })

  it('signing out everywhere needs the password and then ends every session, this one included', async () => {
    const u = await newUser(admin, { tag: 'everywhere', password: 'phrase for everywhere', name: 'Everywhere', role: 'engineer' })
    const a = await signInAt(baseUrl(), u.email, 'phrase for everywhere')
    const b = await signInAt(other.url, u.email, 'phrase for everywhere')
    const wrong = await call('POST', '/api/me/sign-out-everywhere', { cookie: a.cookie, body: { password: 'not the phrase' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(wrong.status).toBe(422)
    expect(wrong.body.errors[0]).toMatchObject({ pointer: '/password' })
    expect(await meAt(other.url, b.cookie)).toBe(200)
    const ok = await call('POST', '/api/me/sign-out-everywhere', { cookie: a.cookie, body: { password: 'phrase for everywhere' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(ok.status).toBe(204)
    expect(await meAt(baseUrl(), a.cookie)).toBe(401)
    expect(await meAt(other.url, b.cookie)).toBe(401)
    const audit = await db('audit_log').where({ entity: 'user', entity_id: String(u.id), action: 'sign_out_everywhere' })
    expect(audit).toHaveLength(1)
  })

  it('signing out ends this session only; the app\'s session read answers an ended session empty', async () => {
    const u = await newUser(admin, { tag: 'sign-out-one', password: 'phrase for one session', name: 'One Session', role: 'operator' })
    const a = await signInAt(baseUrl(), u.email, 'phrase for one session')
    const b = await signInAt(baseUrl(), u.email, 'phrase for one session')
    const out = await fetch(`${baseUrl()}/api/auth/sign-out`, { method: 'POST', headers: { cookie: a.cookie } })
    expect(out.status).toBe(204)
    const cleared = sessionCookieAttributes(out.headers.getSetCookie())
    expect(cleared.value).toBe('')
    expect(await meAt(baseUrl(), `nuxt-session=${cleared.value}`)).toBe(401)
    expect(await meAt(baseUrl(), b.cookie)).toBe(200)

    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { disabled: true } })).status).toBe(200)
    const read = await call('GET', '/api/_auth/session', { cookie: b.cookie })
    expect(read.status).toBe(200)
    expect(read.body.user).toBeUndefined()
  })
})

describe('the session cookie', () => {
  it('is HttpOnly and SameSite=Lax, and not Secure when served over plain HTTP', async () => {
    const s = await signInAt(baseUrl(), 'operator@tercet.test', (await import('../support/http')).DEMO_PASSWORD)
    const { attrs } = sessionCookieAttributes(s.setCookie)
    expect(attrs.has('httponly')).toBe(true)
    expect(attrs.get('samesite')?.toLowerCase()).toBe('lax')
    expect(attrs.get('path')).toBe('/')
    expect(attrs.has('secure')).toBe(false)
  })

  it('is Secure behind a declared proxy that says the browser came over HTTPS, and so is its clearing', async () => {
    const { DEMO_PASSWORD } = await import('../support/http')
    const s = await signInAt(baseUrl(), 'operator@tercet.test', DEMO_PASSWORD, { 'x-forwarded-proto': 'https' })
    const { attrs } = sessionCookieAttributes(s.setCookie)
    expect(attrs.has('secure')).toBe(true)
    expect(attrs.has('httponly')).toBe(true)
    expect(attrs.get('samesite')?.toLowerCase()).toBe('lax')
    const out = await fetch(`${baseUrl()}/api/auth/sign-out`, { method: 'POST', headers: { cookie: s.cookie, 'x-forwarded-proto': 'https' } })
    expect(sessionCookieAttributes(out.headers.getSetCookie()).attrs.has('secure')).toBe(true)
  })

  it('ignores X-Forwarded-Proto when no proxy is declared', async () => {
    const { DEMO_PASSWORD } = await import('../support/http')
    const s = await signInAt(other.url, 'operator@tercet.test', DEMO_PASSWORD, { 'x-forwarded-proto': 'https' })
    expect(sessionCookieAttributes(s.setCookie).attrs.has('secure')).toBe(false)
  })
})
