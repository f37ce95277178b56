import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { changeLotStatus } from '../../server/services/lot-status'
import { changeProduct, createProduct } from '../../server/services/catalogue'

let db: Knex
let actorId: number
const tag = `${process.pid}${Date.now() % 1_000_000}`
const PART = `AUD-${tag}`
const LOT = `AUD-LOT-${tag}`

const auditRows = (entity: string, entityId: string) => db('audit_log').where({ entity, entity_id: entityId }).orderBy('id')

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 4 })
  actorId = (await db('users').where({ email: 'engineer@tercet.test' }).first('id')).id
  const product = await createProduct(db, actorId, { partNumber: PART, name: 'Audit probe', multiplier: 2, inputHz: 10e6, steps: ['final'] })
  await db('lots').insert({ product_id: product.id, code: LOT, planned_qty: 5 })
})

afterAll(async () => {
  await db('audit_log').where({ entity: 'lot', entity_id: LOT }).delete()
  await db('audit_log').where({ entity: 'product', entity_id: PART }).delete()
  await db('lots').where({ code: LOT }).delete()
  await db('products').where({ part_number: PART }).delete()
  await db.destroy()
})

describe('audit rows share the transaction of the change they record', () => {
  it('a lot change that fails after its audit row is written leaves neither the change nor the audit row', async () => {
    // the schema caps a hold reason at 500 characters; the service alone lets the column refuse it
    const tooLong = 'x'.repeat(600)
    await expect(changeLotStatus(db, actorId, LOT, 'hold', tooLong)).rejects.toThrow(/too long|hold_reason/i)
    expect(await auditRows('lot', LOT)).toEqual([])
    expect((await db('lots').where({ code: LOT }).first('status')).status).toBe('open')
  })

  it('the same change with a valid reason commits exactly one audit row with it', async () => {
    await changeLotStatus(db, actorId, LOT, 'hold', 'probe reason')
    const rows = await auditRows('lot', LOT)
    expect(rows).toHaveLength(1)
    expect(rows[0]).toMatchObject({ action: 'hold', user_id: actorId })
    const after = typeof rows[0].after === 'string' ? JSON.parse(rows[0].after) : rows[0].after
    expect(after).toMatchObject({ status: 'on_hold', holdReason: 'probe reason' })
    expect((await db('lots').where({ code: LOT }).first('status', 'hold_reason'))).toEqual({ status: 'on_hold', hold_reason: 'probe reason' })
  })

  it('a product update refused by a column constraint after the audit insert leaves only the creation row', async () => {
    const before = await auditRows('product', PART)
    expect(before.map((r: any) => r.action)).toEqual(['create'])
    await expect(changeProduct(db, actorId, PART, { name: 'n'.repeat(300) })).rejects.toThrow(/too long|name/i)
    expect((await auditRows('product', PART)).map((r: any) => r.action)).toEqual(['create'])
    expect((await db('products').where({ part_number: PART }).first('name')).name).toBe('Audit probe')
  })
})
