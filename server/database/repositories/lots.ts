import type { Knex } from 'knex'
import type { LotListItem } from '../../../shared/types/lot'
import { matchesLotPattern, parseLotPatterns } from '../../../shared/utils/lot-kind'

export async function listLots(db: Knex): Promise<LotListItem[]> {
  const rows = await db('lots as l').join('products as p', 'p.id', 'l.product_id')
    .select('l.id', 'l.code', 'p.part_number', 'p.name as product_name', 'l.status', 'l.planned_qty', 'l.created_at', 'l.engineering',
      db('units as u').count('*').whereRaw('u.lot_id = l.id').as('units_tested'))
    .orderBy('l.created_at', 'desc').orderBy('l.code')
  return rows.map((r: any) => ({
    code: r.code, partNumber: r.part_number, productName: r.product_name, status: r.status,
    plannedQty: r.planned_qty, unitsTested: Number(r.units_tested), createdAt: new Date(r.created_at).toISOString(), engineering: !!r.engineering,
  }))
}

/** The lot of that code, if it exists. */
export async function findLot(db: Knex, code: string): Promise<{ id: number; productId: number } | undefined> {
  const row = await db('lots').where({ code }).first('id', 'product_id')
  return row ? { id: Number(row.id), productId: Number(row.product_id) } : undefined
}

/** The code of the lot a product's serial is recorded in, if it is recorded. */
export async function lotCodeOfSerial(db: Knex, productId: number, serial: string): Promise<string | undefined> {
  const row = await db('units').join('lots', 'lots.id', 'units.lot_id').where({ 'units.product_id': productId, 'units.serial': serial }).first('lots.code')
  return row?.code
}

/**
 * Creates the lot of the code for the part (a concurrent creator wins, and its row is read). A new lot whose code
 * matches the product's engineering pattern is marked engineering from its first run.
 */
export async function createLot(db: Knex, code: string, productId: number): Promise<{ id: number; productId: number }> {
  const product = await db('products').where({ id: productId }).first('engineering_lot_pattern')
  const engineering = matchesLotPattern(code, parseLotPatterns(product?.engineering_lot_pattern).patterns)
  await db.raw('INSERT IGNORE INTO lots (product_id, code, engineering, engineering_source) VALUES (?, ?, ?, ?)', [productId, code, engineering, engineering ? 'pattern' : null])
  return (await findLot(db, code))!
}
