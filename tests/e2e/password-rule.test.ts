import { describe, expect, it } from 'vitest'
import { call, freshAddress, signIn } from '../support/http'

describe('the password rule where an administrator sets a password', () => {
  it('refuses a short, a common and an own-name password with a pointer at /password, and stores nothing', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `rule-${Date.now()}@tercet.test`
    const base = { email, name: 'Rosalind Thackery', role: 'operator' }
    for (const [password, message] of [['short-pw', /at least 12/], ['Password1234', /most common/], ['Rosalind Thackery', /e-mail address or name/]] as const) {
      const r = await call('POST', '/api/users', { cookie: admin, body: { ...base, password } })
      expect(r.status, password).toBe(422)
      expect(r.headers.get('content-type')).toContain('application/problem+json')
      expect(r.body.errors[0]).toMatchObject({ pointer: '/password' })
      expect(r.body.errors[0].message).toMatch(message)
    }
    const list = await call('GET', '/api/users', { cookie: admin })
    expect(JSON.stringify(list.body)).not.toContain(email)

    const made = await call('POST', '/api/users', { cookie: admin, body: { ...base, password: 'brass tuning fork 7' } })
    expect(made.status).toBe(201)
    const reset = await call('PATCH', `/api/users/${made.body.user.id}`, { cookie: admin, body: { password: email.toUpperCase() } })
    expect(reset.status).toBe(422)
    expect(reset.body.errors[0]).toMatchObject({ pointer: '/password' })
    const still = await call('POST', '/api/auth/login', { body: { email, password: 'brass tuning fork 7' }, headers: { 'x-forwarded-for': freshAddress() } })
    expect(still.status).toBe(200)
  })
})
