import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { leaseOne, storeDocument } from '../../server/database/repositories/certificate-documents'
import { fontsFromPackages } from '../../server/services/certificates/fonts'
import { ensureRendered, renderBackoffMs, renderPending } from '../../server/services/certificates/render-job'
import { renderCertificate } from '../../server/services/certificates/render-pdf'
import { HOLD, testedShipment, type CertifiedSet } from '../support/certified-units'

let db: Knex
let set: CertifiedSet
const tag = `CR${Date.now().toString(36).toUpperCase()}`
const fonts = fontsFromPackages()
const row = (id: number) => db('certificates').where({ id }).first()
const release = (id: number) => db('certificates').where({ id, render_lease_owner: HOLD }).update({ render_lease_owner: null, render_lease_until: null })
const documents = async (id: number) => Number((await db('certificate_documents').where({ certificate_id: id }).count({ n: '*' }).first() as any).n)

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 8 })
  // held from any renderer (a test server's background job included) until each test lets go
  set = await testedShipment(db, { tag, count: 4, hold: true })
})
afterAll(async () => { await db.destroy() })

describe('rendering certificates', () => {
  it('stores the rendered bytes with their hash and length, and the stored bytes are what the snapshot renders to', async () => {
    const c = set.issued[0]!
    await release(c.certificateId)
    await ensureRendered(db, c.certificateId, fonts)
    const r = await row(c.certificateId)
    const stored = (await db('certificate_documents').where({ certificate_id: c.certificateId }).first('pdf')).pdf as Buffer
    expect(r.sha256).toBe(createHash('sha256').update(stored).digest('hex'))
    expect(r.byte_length).toBe(stored.length)
    expect(r.rendered_at).not.toBeNull()
    expect(r.render_lease_owner).toBeNull()
    const again = await renderCertificate(JSON.parse(r.snapshot), r.template_version, fonts)
    expect(again.equals(stored)).toBe(true)
  })

  it('two renders on demand at once store one document', async () => {
    const c = set.issued[1]!
    await release(c.certificateId)
    await Promise.all([ensureRendered(db, c.certificateId, fonts), ensureRendered(db, c.certificateId, fonts), ensureRendered(db, c.certificateId, fonts)])
    expect(await documents(c.certificateId)).toBe(1)
  })

  it('a render whose lease was taken over by another owner does not store', async () => {
    const c = set.issued[2]!
    const now = new Date()
    // the hold is a live lease of another owner
    expect((await leaseOne(db, c.certificateId, 'first-owner', now, new Date(now.getTime() + 30_000))).state).toBe('busy')
    // two hours on, the hold has run out: a first owner takes it, and when its lease has run out too, a second
    const later = new Date(now.getTime() + 7_200_000)
    expect((await leaseOne(db, c.certificateId, 'first-owner', later, new Date(later.getTime() + 30_000))).state).toBe('leased')
    const muchLater = new Date(later.getTime() + 60_000)
    expect((await leaseOne(db, c.certificateId, 'second-owner', muchLater, new Date(muchLater.getTime() + 30_000))).state).toBe('leased')
    expect((await leaseOne(db, c.certificateId, 'third-owner', muchLater, new Date(muchLater.getTime() + 1000))).state).toBe('busy')
    const pdf = await renderCertificate(JSON.parse((await row(c.certificateId)).snapshot), 1, fonts)
    const sha = createHash('sha256').update(pdf).digest('hex')
    expect(await storeDocument(db, c.certificateId, 'first-owner', pdf, sha, new Date())).toBe(false)
    expect(await documents(c.certificateId)).toBe(0)
    expect(await storeDocument(db, c.certificateId, 'second-owner', pdf, sha, new Date())).toBe(true)
    expect(await storeDocument(db, c.certificateId, 'second-owner', pdf, sha, new Date())).toBe(false)
    expect(await documents(c.certificateId)).toBe(1)
  })

  it('records a failed render with its attempt count and backs off before trying again', async () => {
    const c = set.issued[3]!
    await db('certificates').where({ id: c.certificateId }).update({ template_version: 99, render_lease_owner: null, render_lease_until: null })
    // lease everything else that waits, so this test's certificate is among the leased
    for (let i = 0; i < 50 && (await row(c.certificateId)).render_attempts === 0; i++) await renderPending(db, fonts, 50)
    const r = await row(c.certificateId)
    expect(r.render_attempts).toBe(1)
    expect(r.render_error).toMatch(/template version 99/)
    expect(r.rendered_at).toBeNull()
    const wait = new Date(r.render_lease_until).getTime() - Date.now()
    expect(wait).toBeGreaterThan(renderBackoffMs(1) - 5000)
    // within the backoff the background leaves it alone
    await renderPending(db, fonts, 50)
    expect((await row(c.certificateId)).render_attempts).toBe(1)
    expect(renderBackoffMs(2)).toBe(2 * renderBackoffMs(1))
    expect(renderBackoffMs(30)).toBe(3_600_000)
    await db('certificates').where({ id: c.certificateId }).update({ template_version: 1 })
    await ensureRendered(db, c.certificateId, fonts)
    expect((await row(c.certificateId)).render_error).toBeNull()
  })
})
