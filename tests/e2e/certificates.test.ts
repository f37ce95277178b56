import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { issueCertificates, revokeCertificates } from '../../server/services/certificates/issue'
import { newVerifyCode } from '../../server/services/certificates/verify-code'
import { testedShipment, type CertifiedSet } from '../support/certified-units'
import { baseUrl, call, freshAddress, signIn } from '../support/http'

let db: Knex
let quill: CertifiedSet
let salt: CertifiedSet
const cookies: Record<string, string> = {}
const tag = `CE${Date.now().toString(36).toUpperCase()}`

/** A GET from its own client address, so the verification limit of one test never touches another. */
const verify = (code: string, address = freshAddress()) => call('GET', `/api/verify/${code}`, { headers: { 'x-forwarded-for': address } })

async function pdf(number: string, cookie: string): Promise<{ status: number; headers: Headers; bytes: Buffer }> {
  const r = await fetch(`${baseUrl()}/api/certificates/${encodeURIComponent(number)}.pdf`, { headers: { cookie } })
  return { status: r.status, headers: r.headers, bytes: Buffer.from(await r.arrayBuffer()) }
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 4 })
  quill = await testedShipment(db, { tag: `${tag}Q`, count: 5, customer: 'QUILL' })
  salt = await testedShipment(db, { tag: `${tag}S`, count: 1, customer: 'SALT' })
  cookies.quill = await signIn('buyer@quillfeather.test')
  cookies.salt = await signIn('buyer@saltmarsh.test')
  cookies.quality = await signIn('quality@tercet.test')
  cookies.operator = await signIn('operator@tercet.test')
})
afterAll(async () => { await db.destroy() })

describe('public verification', () => {
  it('states a valid certificate: serial, part number, number, issue date, status and nothing else', async () => {
    const c = quill.issued[0]!
    const r = await verify(c.verifyCode)
    expect(r.status).toBe(200)
    expect(Object.keys(r.body).sort()).toEqual(['issuedAt', 'number', 'partNumber', 'rendered', 'serial', 'sha256', 'status'])
    expect(r.body).toMatchObject({ serial: quill.units.find((u) => u.unitId === c.unitId)!.serial, partNumber: 'VFW-T3-375', number: c.number, status: 'valid' })
    // the code reads the same typed in lower case and without its dashes
    const typed = await verify(c.verifyCode.toLowerCase().replace(/-/g, ''))
    expect(typed.body.number).toBe(c.number)
  })

  it('states superseded and revoked certificates as such', async () => {
    const [old, gone] = [quill.issued[1]!, quill.issued[2]!]
    const [fresh] = await db.transaction((trx) => issueCertificates(trx, { shipmentId: quill.shipmentId, issuedBy: quill.qualityId, now: new Date(), units: [{ unitId: old.unitId, supersedesId: old.certificateId }] }))
    await db.transaction((trx) => revokeCertificates(trx, { certificateIds: [gone.certificateId], by: quill.qualityId, reason: 'Unit returned damaged', now: new Date() }))
    expect((await verify(old.verifyCode)).body.status).toBe('superseded')
    expect((await verify(fresh!.verifyCode)).body.status).toBe('valid')
    expect((await verify(gone.verifyCode)).body.status).toBe('revoked')
  })

  it('answers an unknown and a malformed code with the same 404', async () => {
    const unknown = await verify(newVerifyCode())
    const malformed = await verify('not-a-code!')
    const empty = await verify('%20')
    for (const r of [unknown, malformed, empty]) {
      expect(r.status).toBe(404)
      expect(r.headers.get('content-type')).toContain('application/problem+json')
    }
    expect(malformed.body).toEqual(unknown.body)
    expect(empty.body).toEqual(unknown.body)
  })

  it('limits each client address to 60 checks a minute, then answers 429 with Retry-After', async () => {
    const address = freshAddress()
    const code = quill.issued[0]!.verifyCode
    const answers = []
    for (let i = 0; i < 60; i++) answers.push((await verify(i % 2 ? code : newVerifyCode(), address)).status)
    expect(new Set(answers)).toEqual(new Set([200, 404]))
    const over = await verify(code, address)
    expect(over.status).toBe(429)
    expect(over.headers.get('content-type')).toContain('application/problem+json')
    const retry = Number(over.headers.get('retry-after'))
    expect(Number.isInteger(retry) && retry >= 1 && retry <= 60).toBe(true)
    // another address is not affected
    expect((await verify(code)).status).toBe(200)
  })
})

describe('certificate documents', () => {
  it('gives a customer its own certificate as an attachment whose ETag is the stored SHA-256 the public check states', async () => {
    const c = quill.issued[3]!
    const r = await pdf(c.number, cookies.quill!)
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toBe('application/pdf')
    expect(r.headers.get('content-disposition')).toBe(`attachment; filename="${c.number}.pdf"`)
    const sha = createHash('sha256').update(r.bytes).digest('hex')
    expect(r.headers.get('etag')).toBe(`"${sha}"`)
    expect(r.bytes.subarray(0, 5).toString()).toBe('%PDF-')
    const v = await verify(c.verifyCode)
    expect(v.body).toMatchObject({ rendered: true, sha256: sha })
    // the stored bytes are served again as stored; staff read any customer's certificate
    expect((await pdf(c.number, cookies.quality!)).bytes.equals(r.bytes)).toBe(true)
    const cached = await fetch(`${baseUrl()}/api/certificates/${c.number}.pdf`, { headers: { cookie: cookies.quill!, 'if-none-match': `"${sha}"` } })
    expect(cached.status).toBe(304)
  })

  it('answers another customer\'s certificate number exactly as a number that does not exist', async () => {
    const theirs = await call('GET', `/api/certificates/${quill.issued[0]!.number}.pdf`, { cookie: cookies.salt })
    const none = await call('GET', '/api/certificates/VFW-C-1999-999999.pdf', { cookie: cookies.salt })
    expect(theirs.status).toBe(404)
    expect(none.status).toBe(404)
    expect(theirs.headers.get('content-type')).toContain('application/problem+json')
    expect(theirs.body).toEqual(none.body)
    // and its own is there
    expect((await pdf(salt.issued[0]!.number, cookies.salt!)).status).toBe(200)
  })

  it('renders on demand once: two downloads at once get the same bytes and one document is stored', async () => {
    // issued just now, so the downloads normally come before the background render (either way one document is stored)
    const prev = quill.issued[4]!
    const [c] = await db.transaction((trx) => issueCertificates(trx, { shipmentId: quill.shipmentId, issuedBy: quill.qualityId, now: new Date(), units: [{ unitId: prev.unitId, supersedesId: prev.certificateId }] }))
    const [a, b] = await Promise.all([pdf(c!.number, cookies.quill!), pdf(c!.number, cookies.operator!)])
    expect([a.status, b.status]).toEqual([200, 200])
    expect(a.bytes.equals(b.bytes)).toBe(true)
    const docs = await db('certificate_documents').where({ certificate_id: c!.certificateId }).count({ n: '*' }).first()
    expect(Number((docs as any).n)).toBe(1)
    const row = await db('certificates').where({ id: c!.certificateId }).first('sha256', 'byte_length')
    expect(row).toEqual({ sha256: createHash('sha256').update(a.bytes).digest('hex'), byte_length: a.bytes.length })
  })
})
