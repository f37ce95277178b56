import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
let quality = ''
let admin = ''

beforeAll(async () => {
  quality = await signIn(ROLE_ACCOUNTS.quality)
  admin = await signIn(ROLE_ACCOUNTS.admin)
})

describe('customers and their contacts', () => {
  it('creates, renames, deactivates and reactivates a customer, each change audited', async () => {
    const created = await call('POST', '/api/customers', { cookie: quality, body: { code: ` c-${tag} `, name: 'Brackwater Tracking Array' } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const id = created.body.customer.id
    expect(created.body.customer).toMatchObject({ code: `C-${tag}`, name: 'Brackwater Tracking Array', active: true, contacts: [] })

    const dup = await call('POST', '/api/customers', { cookie: admin, body: { code: `C-${tag}`, name: 'Another' } })
    expect(dup.status).toBe(409)
    expect(dup.body.errors).toEqual([{ pointer: '/code', message: 'already in use' }])

    const bad = await call('POST', '/api/customers', { cookie: admin, body: { code: 'has space', name: '' } })
    expect(bad.status).toBe(400)
    expect([...new Set(bad.body.errors.map((e: any) => e.pointer))].sort()).toEqual(['/code', '/name'])

    expect((await call('PATCH', `/api/customers/${id}`, { cookie: quality, body: { name: 'Brackwater Tracking Array Ltd' } })).body.customer.name).toBe('Brackwater Tracking Array Ltd')
    const off = await call('PATCH', `/api/customers/${id}`, { cookie: admin, body: { active: false } })
    expect(off.body.customer.active).toBe(false)
    const list = await call('GET', '/api/customers', { cookie: quality })
    expect(list.body.customers.find((c: any) => c.id === id)).toMatchObject({ active: false, contacts: 0, users: 0 })

    // a deactivated customer takes no new shipment
    const shipment = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: id } })
    expect(shipment.status).toBe(422)
    expect(shipment.body.errors[0].pointer).toBe('/customerId')

    expect((await call('PATCH', `/api/customers/${id}`, { cookie: admin, body: { active: true } })).body.customer.active).toBe(true)
    const audit = await call('GET', `/api/audit?entity=customer&entityId=${id}`, { cookie: admin })
    expect(audit.body.entries.map((r: any) => r.action).sort()).toEqual(['activate', 'create', 'deactivate', 'update'])
  })

  it('adds, changes and removes contacts; a missing customer or contact is 404', async () => {
    const { body } = await call('POST', '/api/customers', { cookie: quality, body: { code: `K-${tag}`, name: 'Kestrel Beacon Services' } })
    const id = body.customer.id
    const added = await call('POST', `/api/customers/${id}/contacts`, { cookie: quality, body: { name: 'Orla Penhallow', email: 'Orla@Kestrel.test', receivesCertificates: true } })
    expect(added.status, JSON.stringify(added.body)).toBe(201)
    expect(added.body.contact).toMatchObject({ name: 'Orla Penhallow', email: 'orla@kestrel.test', receivesCertificates: true, phone: null })
    const cid = added.body.contact.id

    expect((await call('POST', `/api/customers/${id}/contacts`, { cookie: quality, body: { name: 'X', email: 'not-an-address' } })).body.errors[0].pointer).toBe('/email')
    const changed = await call('PATCH', `/api/customers/${id}/contacts/${cid}`, { cookie: quality, body: { receivesCertificates: false, phone: '+44 1632 960123' } })
    expect(changed.body.contact).toMatchObject({ receivesCertificates: false, phone: '+44 1632 960123' })
    expect((await call('GET', `/api/customers/${id}`, { cookie: admin })).body.customer.contacts).toHaveLength(1)

    const other = await call('POST', '/api/customers', { cookie: quality, body: { code: `O-${tag}`, name: 'Other' } })
    // a contact is reached only through its own customer
    expect((await call('DELETE', `/api/customers/${other.body.customer.id}/contacts/${cid}`, { cookie: quality })).status).toBe(404)
    expect((await call('DELETE', `/api/customers/${id}/contacts/${cid}`, { cookie: quality })).status).toBe(200)
    expect((await call('GET', `/api/customers/${id}`, { cookie: admin })).body.customer.contacts).toEqual([])
    expect((await call('GET', '/api/customers/999999', { cookie: admin })).status).toBe(404)
  })

  it('a customer user must belong to a customer', async () => {
    const refused = await call('POST', '/api/users', { cookie: admin, body: { email: `nobody-${tag}@buyer.test`, name: 'Nobody', role: 'customer', password: 'long enough password' } })
    expect(refused.status).toBe(422)
    expect(refused.body.errors[0].pointer).toBe('/customerId')
    const { body } = await call('POST', '/api/customers', { cookie: admin, body: { code: `U-${tag}`, name: 'Umber Radio' } })
    const ok = await call('POST', '/api/users', { cookie: admin, body: { email: `buyer-${tag}@umber.test`, name: 'Buyer', role: 'customer', customerId: body.customer.id, password: 'long enough password' } })
    expect(ok.status).toBe(201)
    expect(ok.body.user.customerId).toBe(body.customer.id)
    const unknown = await call('POST', '/api/users', { cookie: admin, body: { email: `ghost-${tag}@umber.test`, name: 'Ghost', role: 'customer', customerId: 999999, password: 'long enough password' } })
    expect(unknown.status).toBe(422)
    expect(unknown.body.errors[0].pointer).toBe('/customerId')
  })
})
