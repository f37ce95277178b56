// Releasing a shipment queues a notice to the customer's certificate contacts, and the server's sender delivers it over
// SMTP to the local mail catcher the test run started; the admin Outbox routes show both sides.
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { makePart, postRun, releaseLot } from '../support/shipping'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const P = `ML-${tag}`.slice(0, 30)
const L1 = `${P}-1`.slice(0, 32)
const site = (process.env.NUXT_PUBLIC_SITE_URL || 'http://localhost:3000').replace(/\/+$/, '')
let quality = ''
let admin = ''

async function customerWith(contacts: { name: string; email: string; receivesCertificates: boolean }[], code: string): Promise<number> {
  const c = await call('POST', '/api/customers', { cookie: quality, body: { code, name: `Mailtest ${code}` } })
  expect(c.status, JSON.stringify(c.body)).toBe(201)
  for (const k of contacts) expect((await call('POST', `/api/customers/${c.body.customer.id}/contacts`, { cookie: quality, body: k })).status).toBe(201)
  return c.body.customer.id
}

async function releasedShipment(customerId: number, serials: string[]): Promise<{ id: number; code: string }> {
  const s = await call('POST', '/api/shipments', { cookie: quality, body: { customerId, customerPo: `PO-${tag}` } })
  expect(s.status, JSON.stringify(s.body)).toBe(201)
  const id = s.body.shipment.id
  expect((await call('POST', `/api/shipments/${id}/serials`, { cookie: quality, body: { lines: serials } })).status).toBe(200)
  const r = await call('POST', `/api/shipments/${id}/release`, { cookie: quality, body: {} })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return { id, code: r.body.code ?? s.body.shipment.code }
}

async function receivedFor(subjectPart: string, timeoutMs = 30_000): Promise<any[]> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const r = await call('GET', '/api/admin/outbox/received', { cookie: admin })
    expect(r.status).toBe(200)
    const hits = r.body.messages.filter((m: any) => m.subject.includes(subjectPart))
    if (hits.length || Date.now() > deadline) return hits
    await new Promise((ok) => setTimeout(ok, 250))
  }
}

beforeAll(async () => {
  quality = await signIn(ROLE_ACCOUNTS.quality)
  admin = await signIn(ROLE_ACCOUNTS.admin)
  await makePart(P)
  for (const s of ['M1', 'M2', 'M3', 'N1']) await postRun(P, L1, s)
  await releaseLot(L1, quality)
}, 120_000)

describe('the shipment release notice', () => {
  it('reaches the certificate contacts over SMTP with the shipment, PO, unit count, portal link and both parts, once', async () => {
    const customer = await customerWith([
      { name: 'Ines Harrow', email: `ines.${tag}@brackwater.example`.toLowerCase(), receivesCertificates: true },
      { name: 'Tomas Reed', email: `tomas.${tag}@brackwater.example`.toLowerCase(), receivesCertificates: true },
      { name: 'Quiet Buyer', email: `buyer.${tag}@brackwater.example`.toLowerCase(), receivesCertificates: false },
    ], `MA-${tag}`.slice(0, 20))
    const s = await releasedShipment(customer, ['M1', 'M2', 'M3'])
    const got = await receivedFor(s.code)
    expect(got).toHaveLength(1)
    const m = got[0]
    expect(m.to.sort()).toEqual([`ines.${tag}@brackwater.example`.toLowerCase(), `tomas.${tag}@brackwater.example`.toLowerCase()].sort())
    expect(m.subject).toBe(`Shipment ${s.code} released — 3 units, PO PO-${tag}`)
    const link = `${site}/portal/shipments/${s.id}`
    expect(m.links).toEqual([link])
    expect(m.text).toContain(link)
    expect(m.html).toContain(`href="${link}"`)
    expect(m.text).toContain(`PO-${tag}`)
    expect(m.html).toContain(`PO-${tag}`)

    // the outbox row is sent, and its Message-ID is the one received
    const outbox = await call('GET', '/api/admin/outbox', { cookie: admin })
    expect(outbox.status).toBe(200)
    expect(outbox.body.relay).toMatchObject({ host: '127.0.0.1', localCatcher: true })
    const row = outbox.body.messages.find((r: any) => r.subject === m.subject)
    expect(row).toMatchObject({ status: 'sent', template: 'shipmentReleased', messageId: m.messageId })
    // a while later still one copy
    await new Promise((ok) => setTimeout(ok, 2500))
    expect(await receivedFor(s.code, 0)).toHaveLength(1)
  })

  it('is not queued when no contact receives certificate notices', async () => {
    const customer = await customerWith([{ name: 'Nobody Listening', email: `none.${tag}@quietfield.example`.toLowerCase(), receivesCertificates: false }], `MB-${tag}`.slice(0, 20))
    const s = await releasedShipment(customer, ['N1'])
    const outbox = await call('GET', '/api/admin/outbox', { cookie: admin })
    expect(outbox.body.messages.some((r: any) => r.subject.includes(s.code))).toBe(false)
  })
})
