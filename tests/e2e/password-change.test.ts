import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn } from '../support/http'
import { attemptSignIn, newUser } from '../support/accounts'

let db: Knex
let admin: string
beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn('admin@tercet.test')
})
afterAll(async () => { await db.destroy() })

const probe = (tag: string, password: string) => newUser(admin, { tag, password, name: `Probe ${tag}`, role: 'engineer' })

const login = attemptSignIn

describe('changing one\'s own password', () => {
  it('needs the current password, applies the rule, then the new password signs in and the old one does not', async () => {
    const u = await probe('change', 'first password of probe')
    const cookie = await signIn(u.email, 'first password of probe')

    const wrong = await call('POST', '/api/me/password', { cookie, body: { currentPassword: 'not my password', newPassword: 'an entirely new phrase' } })
    expect(wrong.status).toBe(422)
    expect(wrong.headers.get('content-type')).toContain('application/problem+json')
    expect(wrong.body.errors[0]).toMatchObject({ pointer: '/currentPassword' })

    for (const weak of ['too-short', 'qwerty123456', u.email]) {
      const r = await call('POST', '/api/me/password', { cookie, body: { currentPassword: 'first password of probe', newPassword: weak } })
      expect(r.status, weak).toBe(422)
      expect(r.body.errors[0]).toMatchObject({ pointer: '/newPassword' })
    }
    expect((await login(u.email, 'first password of probe')).status).toBe(200) // nothing changed so far

    const ok = await call('POST', '/api/me/password', { cookie, body: { currentPassword: 'first password of probe', newPassword: 'an entirely new phrase' } })
    expect(ok.status).toBe(200)
    expect((await login(u.email, 'an entirely new phrase')).status).toBe(200)
    expect((await login(u.email, 'first password of probe')).status).toBe(401)

    const audit = await db('audit_log').where({ entity: 'user', entity_id: String(u.id), action: 'password_change' })
    expect(audit).toHaveLength(1)
    expect(audit[0].user_id).toBe(u.id)
    expect(JSON.stringify(audit[0])).not.toContain('an entirely new phrase')
  })

  it('counts wrong current passwords toward the sign-in failure limit (429 with Retry-After)', async () => {
    const u = await probe('guess', 'guessing target phrase')
    const cookie = await signIn(u.email, 'guessing target phrase')
    const statuses: number[] = []
    let retryAfter = 0
    for (let i = 0; i < 7; i++) {
      const r = await call('POST', '/api/me/password', { cookie, body: { currentPassword: `guess number ${i}`, newPassword: 'an entirely new phrase' } })
      statuses.push(r.status)
      if (r.status === 429) { retryAfter = Number(r.headers.get('retry-after')); break }
    }
    expect(statuses.slice(0, 5)).toEqual([422, 422, 422, 422, 422])
    expect(statuses.at(-1)).toBe(429)
    expect(retryAfter).toBeGreaterThan(0)
    // the account's sign-in is held back too
    expect((await login(u.email, 'guessing target phrase')).status).toBe(429)
  })

  it('refuses a call without a session', async () => {
    const r = await call('POST', '/api/me/password', { body: { currentPassword: 'x', newPassword: 'an entirely new phrase' } })
    expect(r.status).toBe(401)
  })
})
