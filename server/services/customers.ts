import type { Knex } from 'knex'
import type { CustomerContact, CustomerDetail } from '../../shared/types/customer'
import { writeAudit } from '../database/repositories/audit'
import {
  contactsOf, deleteContact, findContact, findCustomer, insertContact, insertCustomer, updateContact, updateCustomer, type ContactFields,
} from '../database/repositories/customers'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

export type CustomerFields = { code: string; name: string }
export type CustomerChange = Partial<CustomerFields & { active: boolean }>
export type ContactInput = { name: string; email: string; phone?: string | null; function?: string | null; receivesCertificates?: boolean }

const duplicateCode = (e: unknown) => (e as any)?.code === 'ER_DUP_ENTRY'
const codeTaken = () => new RuleError(409, 'Another customer already has this code.', [{ pointer: '/code', message: 'already in use' }])

export async function customerDetail(db: Knex, id: number): Promise<CustomerDetail | undefined> {
  const c = await findCustomer(db, id)
  return c && { ...c, contacts: await contactsOf(db, id) }
}

export async function createCustomer(db: Knex, actorId: number, input: CustomerFields): Promise<CustomerDetail> {
  const fields = { code: input.code.trim().toUpperCase(), name: input.name.trim() }
  try {
    return await writeTransaction(db, async (trx) => {
      const id = await insertCustomer(trx, fields)
      await writeAudit(trx, { userId: actorId, action: 'create', entity: 'customer', entityId: id, after: { ...fields, active: true } })
      return (await customerDetail(trx, id))!
    })
  } catch (e) {
    if (duplicateCode(e)) throw codeTaken()
    throw e
  }
}

/** Renames, recodes, deactivates or reactivates. A deactivated customer gets no new shipments; what exists stays readable. */
export async function changeCustomer(db: Knex, actorId: number, id: number, change: CustomerChange): Promise<CustomerDetail> {
  const fields: CustomerChange = {}
  if (change.code !== undefined) fields.code = change.code.trim().toUpperCase()
  if (change.name !== undefined) fields.name = change.name.trim()
  if (change.active !== undefined) fields.active = change.active
  try {
    return await writeTransaction(db, async (trx) => {
      const before = await findCustomer(trx, id, { forUpdate: true })
      if (!before) throw new RuleError(404, 'No such customer.')
      const action = fields.active === false && before.active ? 'deactivate' : fields.active === true && !before.active ? 'activate' : 'update'
      await writeAudit(trx, { userId: actorId, action, entity: 'customer', entityId: id, before: { code: before.code, name: before.name, active: before.active }, after: { code: before.code, name: before.name, active: before.active, ...fields } })
      await updateCustomer(trx, id, fields)
      return (await customerDetail(trx, id))!
    })
  } catch (e) {
    if (duplicateCode(e)) throw codeTaken()
    throw e
  }
}

function contactFields(c: ContactInput): ContactFields {
  return { name: c.name.trim(), email: c.email.trim().toLowerCase(), phone: c.phone?.trim() || null, function: c.function?.trim() || null, receivesCertificates: c.receivesCertificates ?? false }
}

export async function addContact(db: Knex, actorId: number, customerId: number, input: ContactInput): Promise<CustomerContact> {
  return writeTransaction(db, async (trx) => {
    if (!await findCustomer(trx, customerId, { forUpdate: true })) throw new RuleError(404, 'No such customer.')
    const fields = contactFields(input)
    const id = await insertContact(trx, customerId, fields)
    await writeAudit(trx, { userId: actorId, action: 'add_contact', entity: 'customer', entityId: customerId, after: { contactId: id, ...fields } })
    return (await findContact(trx, customerId, id))!
  })
}

export async function changeContact(db: Knex, actorId: number, customerId: number, contactId: number, input: Partial<ContactInput>): Promise<CustomerContact> {
  return writeTransaction(db, async (trx) => {
    const before = await findContact(trx, customerId, contactId)
    if (!before) throw new RuleError(404, 'No such contact.')
    const fields: Partial<ContactFields> = {}
    if (input.name !== undefined) fields.name = input.name.trim()
    if (input.email !== undefined) fields.email = input.email.trim().toLowerCase()
    if (input.phone !== undefined) fields.phone = input.phone?.trim() || null
    if (input.function !== undefined) fields.function = input.function?.trim() || null
    if (input.receivesCertificates !== undefined) fields.receivesCertificates = input.receivesCertificates
    await writeAudit(trx, { userId: actorId, action: 'change_contact', entity: 'customer', entityId: customerId, before, after: { ...before, ...fields } })
    await updateContact(trx, contactId, fields)
    return (await findContact(trx, customerId, contactId))!
  })
}

export async function removeContact(db: Knex, actorId: number, customerId: number, contactId: number): Promise<void> {
  await writeTransaction(db, async (trx) => {
    const before = await findContact(trx, customerId, contactId)
    if (!before) throw new RuleError(404, 'No such contact.')
    await writeAudit(trx, { userId: actorId, action: 'remove_contact', entity: 'customer', entityId: customerId, before })
    await deleteContact(trx, contactId)
  })
}
