import type { Knex } from 'knex'
import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, freshAddress, signIn } from '../support/http'
import { newUser, uniqueEmail } from '../support/accounts'
import { startSecondServer } from '../support/second-server'

// Failed password attempts are counted in the database, so two app instances behind one address share one limit
// (5 failures per account, 25 per client address, in 15 minutes).

let db: Knex
let admin: string
let second: { url: string; stop: () => void }
beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn('admin@tercet.test')
  second = await startSecondServer({})
}, 60_000)
afterAll(async () => {
  second?.stop()
  await db.destroy()
})

async function attempt(url: string, email: string, password: string, address = freshAddress()) {
  const r = await fetch(`${url}/api/auth/login`, {
    method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': address }, body: JSON.stringify({ email, password }),
  })
  return { status: r.status, retryAfter: r.headers.get('retry-after'), type: r.headers.get('content-type') }
}

describe('sign-in failure limits across instances', () => {
  it('failures against one account spread over two instances reach one limit of 5', async () => {
    const u = await newUser(admin, { tag: 'two-servers', password: 'the right phrase here', name: 'Two Servers', role: 'operator' })
    const urls = [baseUrl(), second.url]
    const statuses: number[] = []
    for (let i = 0; i < 5; i++) statuses.push((await attempt(urls[i % 2]!, u.email, `wrong-${i}`)).status)
    expect(statuses).toEqual([401, 401, 401, 401, 401])
    for (const url of urls) {
      const limited = await attempt(url, u.email, 'the right phrase here')
      expect(limited.status).toBe(429)
      expect(limited.type).toContain('application/problem+json')
      const wait = Number(limited.retryAfter)
      expect(wait).toBeGreaterThan(0)
      expect(wait).toBeLessThanOrEqual(15 * 60)
    }
    // the counter is keyed by the address's hash, never the address itself
    const key = createHash('sha256').update(u.email.toLowerCase()).digest('hex')
    expect(await db('request_limits').where({ bucket: 'signin-account', client_key: key }).first()).toMatchObject({ hits: 5 })
    expect(await db('request_limits').where('client_key', 'like', `%${u.email}%`).first()).toBeUndefined()
  })

  it('failures from one address over many accounts and both instances reach one limit of 25', async () => {
    const address = freshAddress()
    const statuses: number[] = []
    for (let i = 0; i < 25; i++) statuses.push((await attempt(i % 2 ? second.url : baseUrl(), uniqueEmail(`ghost${i}`), 'x', address)).status)
    expect(statuses.every((s) => s === 401)).toBe(true)
    const limited = await attempt(second.url, uniqueEmail('ghost-last'), 'x', address)
    expect(limited.status).toBe(429)
    expect(Number(limited.retryAfter)).toBeGreaterThan(0)
    // another address is not held back
    expect((await attempt(baseUrl(), uniqueEmail('elsewhere'), 'x')).status).toBe(401)
  })

  it('a right password clears the account\'s failures', async () => {
    const u = await newUser(admin, { tag: 'clears', password: 'phrase that clears', name: 'Clears', role: 'operator' })
    for (let i = 0; i < 4; i++) expect((await attempt(second.url, u.email, `wrong-${i}`)).status).toBe(401)
    expect((await attempt(baseUrl(), u.email, 'phrase that clears')).status).toBe(200)
    for (let i = 0; i < 4; i++) expect((await attempt(baseUrl(), u.email, `again-${i}`)).status).toBe(401)
    expect((await attempt(second.url, u.email, 'phrase that clears')).status).toBe(200)
  })
})
