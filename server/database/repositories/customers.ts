import type { Knex } from 'knex'

export type CustomerRecord = { id: number; code: string; name: string }

export async function listCustomers(db: Knex): Promise<CustomerRecord[]> {
  return db('customers').select('id', 'code', 'name').orderBy('name')
}
