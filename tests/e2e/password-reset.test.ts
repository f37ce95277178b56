import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, freshAddress, signIn } from '../support/http'
import { attemptSignIn, newUser, uniqueEmail } from '../support/accounts'

let db: Knex
let admin: string
beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn('admin@tercet.test')
})
afterAll(async () => { await db.destroy() })

const resettable = (tag: string, password: string) => newUser(admin, { tag, password, name: `Reset ${tag}`, role: 'operator' })

const ask = (email: string, address = freshAddress()) => call('POST', '/api/auth/password-reset', { body: { email }, headers: { 'x-forwarded-for': address } })
const confirm = (token: string, newPassword: string) => call('POST', '/api/auth/password-reset/confirm', { body: { token, newPassword }, headers: { 'x-forwarded-for': freshAddress() } })
const login = attemptSignIn

/** The links queued for an address, newest last, read from the outbox message's text. */
async function linksFor(email: string): Promise<string[]> {
  const rows = await db('mail_outbox').where('template', 'passwordReset').orderBy('id')
  return rows
    .filter((r) => (typeof r.to === 'string' ? JSON.parse(r.to) : r.to).includes(email))
    .map((r) => /\/reset-password\/([A-Za-z0-9_-]+)/.exec(r.text)![1]!)
}

describe('a forgotten password', () => {
  it('answers an unknown and a known address alike, and only the known one gets a link', async () => {
    const u = await resettable('same', 'the original phrase')
    const ghost = uniqueEmail('ghost')
    const known = await ask(u.email)
    const unknown = await ask(ghost)
    expect(known.status).toBe(202)
    expect(unknown.status).toBe(202)
    expect(unknown.body).toEqual(known.body)
    expect(await linksFor(u.email)).toHaveLength(1)
    expect(await linksFor(ghost)).toHaveLength(0)
    const rows = await db('password_resets').where('user_id', u.id)
    expect(rows).toHaveLength(1)
    // only the hash of the token is kept, and the link lasts 30 minutes
    const [token] = await linksFor(u.email)
    expect(Buffer.from(rows[0].token_hash).equals(createHash('sha256').update(token!).digest())).toBe(true)
    expect(new Date(rows[0].expires_at).getTime() - new Date(rows[0].created_at).getTime()).toBe(30 * 60_000)
  })

  it('sends no link to a disabled account, with the same answer', async () => {
    const u = await resettable('off', 'the original phrase')
    expect((await call('PATCH', `/api/users/${u.id}`, { cookie: admin, body: { disabled: true } })).status).toBe(200)
    expect((await ask(u.email)).status).toBe(202)
    expect(await linksFor(u.email)).toHaveLength(0)
  })

  it('limits requests per e-mail address and per client address with 429 and Retry-After', async () => {
    const email = uniqueEmail('flood')
    const statuses: number[] = []
    for (let i = 0; i < 6; i++) statuses.push((await ask(email)).status) // each from a new client address
    expect(statuses).toEqual([202, 202, 202, 202, 202, 429])
    const limited = await ask(email)
    expect(Number(limited.headers.get('retry-after'))).toBeGreaterThan(0)
    expect(limited.headers.get('content-type')).toContain('application/problem+json')

    const address = freshAddress()
    const fromOne: number[] = []
    for (let i = 0; i < 21; i++) fromOne.push((await ask(uniqueEmail(`one${i}`), address)).status)
    expect(fromOne.slice(0, 20).every((s) => s === 202)).toBe(true)
    expect(fromOne[20]).toBe(429)
  })

  it('sets the password once through the link; the rule applies; other links close; reuse is refused', async () => {
    const u = await resettable('use', 'the original phrase')
    await ask(u.email)
    await ask(u.email)
    const [first, second] = await linksFor(u.email)
    expect(first).not.toBe(second)

    const weak = await confirm(second!, 'password1234')
    expect(weak.status).toBe(422)
    expect(weak.body.errors[0]).toMatchObject({ pointer: '/newPassword' })
    expect((await login(u.email, 'the original phrase')).status).toBe(200) // a refused password leaves the link usable

    const ok = await confirm(second!, 'a phrase chosen by link')
    expect(ok.status).toBe(200)
    expect((await login(u.email, 'a phrase chosen by link')).status).toBe(200)
    expect((await login(u.email, 'the original phrase')).status).toBe(401)

    const reused = await confirm(second!, 'yet another long phrase')
    const other = await confirm(first!, 'yet another long phrase')
    const unknown = await confirm('no-such-token-at-all', 'yet another long phrase')
    for (const r of [reused, other, unknown]) {
      expect(r.status).toBe(410)
      expect(r.headers.get('content-type')).toContain('application/problem+json')
      expect(r.body.detail).toBe(unknown.body.detail)
    }
    expect((await login(u.email, 'a phrase chosen by link')).status).toBe(200)

    const audit = await db('audit_log').where({ entity: 'user', entity_id: String(u.id), action: 'password_reset' })
    expect(audit).toHaveLength(1)
    expect(JSON.stringify(audit[0])).not.toContain('a phrase chosen by link')
  })

  it('refuses an expired link the same way', async () => {
    const u = await resettable('late', 'the original phrase')
    await ask(u.email)
    const [token] = await linksFor(u.email)
    // the link was sent 31 minutes ago
    await db('password_resets').where('user_id', u.id).update({ created_at: new Date(Date.now() - 31 * 60_000), expires_at: new Date(Date.now() - 60_000) })
    const r = await confirm(token!, 'a phrase chosen too late')
    expect(r.status).toBe(410)
    expect((await login(u.email, 'the original phrase')).status).toBe(200)
  })
})
