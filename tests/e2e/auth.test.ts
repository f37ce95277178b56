import { describe, expect, it } from 'vitest'
import { call, freshAddress, signIn, DEMO_PASSWORD } from '../support/http'

describe('sign-in', () => {
  it('signs in with the right password and reads the session back', async () => {
    const cookie = await signIn('engineer@tercet.test')
    const me = await call('GET', '/api/me', { cookie })
    expect(me.status).toBe(200)
    expect(me.body).toMatchObject({ email: 'engineer@tercet.test', role: 'engineer' })
    const session = await call('GET', '/api/_auth/session', { cookie })
    expect(session.body.user.email).toBe('engineer@tercet.test')
  })

  it('answers a wrong password and an unknown account with the same 401', async () => {
    const a = await call('POST', '/api/auth/login', { body: { email: 'quality@tercet.test', password: 'wrong' }, headers: { 'x-forwarded-for': freshAddress() } })
    const b = await call('POST', '/api/auth/login', { body: { email: 'nobody@tercet.test', password: 'wrong' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(a.status).toBe(401)
    expect(b.status).toBe(401)
    expect(a.body.detail).toBe(b.body.detail)
    expect(a.headers.get('content-type')).toContain('application/problem+json')
  })

  it('rejects a malformed body with pointers', async () => {
    const r = await call('POST', '/api/auth/login', { body: { email: 'x@y.test' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(r.status).toBe(400)
    expect(r.body.errors).toContainEqual(expect.objectContaining({ pointer: '/password' }))
  })

  it('signs out through the sign-out route', async () => {
    const cookie = await signIn('operator@tercet.test')
    const out = await fetch((await import('../support/http')).baseUrl() + '/api/auth/sign-out', { method: 'POST', headers: { cookie } })
    expect(out.status).toBe(204)
    const cleared = out.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
    const me = await call('GET', '/api/me', { cookie: cleared })
    expect(me.status).toBe(401)
  })

  it('rate-limits failed attempts per account with Retry-After', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `locked-${Date.now()}@tercet.test`
    const made = await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Lockout Probe', role: 'operator', password: DEMO_PASSWORD } })
    expect(made.status).toBe(201)
    let last = 0
    for (let i = 0; i < 6; i++) {
      const r = await call('POST', '/api/auth/login', { body: { email, password: `nope-${i}` }, headers: { 'x-forwarded-for': freshAddress() } })
      last = r.status
      if (r.status === 429) {
        expect(Number(r.headers.get('retry-after'))).toBeGreaterThan(0)
        break
      }
    }
    expect(last).toBe(429)
    // even the right password waits until the window passes
    const right = await call('POST', '/api/auth/login', { body: { email, password: DEMO_PASSWORD }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(right.status).toBe(429)
  })

  it('rate-limits failed attempts per address', async () => {
    const address = freshAddress()
    let status = 0
    for (let i = 0; i < 30 && status !== 429; i++) {
      const r = await call('POST', '/api/auth/login', { body: { email: `ghost${i}@tercet.test`, password: 'x' }, headers: { 'x-forwarded-for': address } })
      status = r.status
    }
    expect(status).toBe(429)
  })
})

describe('user administration', () => {
  it('creates a user, disables it, and the disabled user can no longer sign in', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `temp-${Date.now()}@tercet.test`
    const created = await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Temporary Tester', role: 'operator', password: 'long-enough-pw' } })
    expect(created.status).toBe(201)
    const userCookie = await signIn(email, 'long-enough-pw')
    expect((await call('GET', '/api/me', { cookie: userCookie })).status).toBe(200)

    const off = await call('PATCH', `/api/users/${created.body.user.id}`, { cookie: admin, body: { disabled: true } })
    expect(off.status).toBe(200)
    expect(off.body.user.disabled).toBe(true)
    expect((await call('GET', '/api/me', { cookie: userCookie })).status).toBe(401)
    const again = await call('POST', '/api/auth/login', { body: { email, password: 'long-enough-pw' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(again.status).toBe(401)
  })

  it('refuses a customer user without a customer, and a duplicate e-mail', async () => {
    const admin = await signIn('admin@tercet.test')
    const noCustomer = await call('POST', '/api/users', { cookie: admin, body: { email: `c-${Date.now()}@x.test`, name: 'C', role: 'customer', password: 'long-enough-pw' } })
    expect(noCustomer.status).toBe(422)
    expect(noCustomer.body.errors[0].pointer).toBe('/customerId')
    const dup = await call('POST', '/api/users', { cookie: admin, body: { email: 'quality@tercet.test', name: 'Dup', role: 'quality', password: 'long-enough-pw' } })
    expect(dup.status).toBe(409)
  })
})
