import type { Knex } from 'knex'
import type { CustomerContact, CustomerDetail, CustomerSummary } from '../../../shared/types/customer'

export type CustomerRecord = { id: number; code: string; name: string }

export async function listCustomers(db: Knex): Promise<CustomerSummary[]> {
  const rows = await db('customers as c').orderBy('c.name').select('c.id', 'c.code', 'c.name', 'c.active',
    db.raw('(SELECT COUNT(*) FROM customer_contacts k WHERE k.customer_id = c.id) AS contacts'),
    db.raw("(SELECT COUNT(*) FROM users u WHERE u.customer_id = c.id AND u.role = 'customer') AS users"))
  return rows.map((r: any) => ({ id: r.id, code: r.code, name: r.name, active: !!r.active, contacts: Number(r.contacts), users: Number(r.users) }))
}

function toContact(r: any): CustomerContact {
  return { id: r.id, name: r.name, email: r.email, phone: r.phone ?? null, function: r.function ?? null, receivesCertificates: !!r.receives_certificates }
}

export async function findCustomer(db: Knex, id: number, opts: { forUpdate?: boolean } = {}): Promise<Omit<CustomerDetail, 'contacts'> | undefined> {
  const q = db('customers').where({ id }).first()
  const r = await (opts.forUpdate ? q.forUpdate() : q)
  return r ? { id: r.id, code: r.code, name: r.name, active: !!r.active, createdAt: new Date(r.created_at).toISOString(), updatedAt: new Date(r.updated_at).toISOString() } : undefined
}

export async function contactsOf(db: Knex, customerId: number): Promise<CustomerContact[]> {
  return (await db('customer_contacts').where({ customer_id: customerId }).orderBy('name').orderBy('id')).map(toContact)
}

export async function findContact(db: Knex, customerId: number, id: number): Promise<CustomerContact | undefined> {
  const r = await db('customer_contacts').where({ customer_id: customerId, id }).first()
  return r ? toContact(r) : undefined
}

export async function insertCustomer(trx: Knex, c: { code: string; name: string }): Promise<number> {
  const [id] = await trx('customers').insert({ code: c.code, name: c.name })
  return id!
}

export async function updateCustomer(trx: Knex, id: number, c: Partial<{ code: string; name: string; active: boolean }>): Promise<void> {
  await trx('customers').where({ id }).update({ ...c, updated_at: trx.fn.now(3) })
}

export type ContactFields = { name: string; email: string; phone: string | null; function: string | null; receivesCertificates: boolean }

function contactRow(c: Partial<ContactFields>) {
  const row: Record<string, unknown> = {}
  if (c.name !== undefined) row.name = c.name
  if (c.email !== undefined) row.email = c.email
  if (c.phone !== undefined) row.phone = c.phone
  if (c.function !== undefined) row.function = c.function
  if (c.receivesCertificates !== undefined) row.receives_certificates = c.receivesCertificates
  return row
}

export async function insertContact(trx: Knex, customerId: number, c: ContactFields): Promise<number> {
  const [id] = await trx('customer_contacts').insert({ customer_id: customerId, ...contactRow(c) })
  return id!
}

export async function updateContact(trx: Knex, id: number, c: Partial<ContactFields>): Promise<void> {
  const row = contactRow(c)
  if (Object.keys(row).length) await trx('customer_contacts').where({ id }).update(row)
}

export async function deleteContact(trx: Knex, id: number): Promise<void> {
  await trx('customer_contacts').where({ id }).delete()
}
