import type { Knex } from 'knex'

export type LotListItem = {
  code: string; partNumber: string; productName: string; status: string; plannedQty: number | null
  unitsTested: number; createdAt: Date
}

export async function listLots(db: Knex): Promise<LotListItem[]> {
  const rows = await db('lots as l').join('products as p', 'p.id', 'l.product_id')
    .select('l.id', 'l.code', 'p.part_number', 'p.name as product_name', 'l.status', 'l.planned_qty', 'l.created_at',
      db('units as u').count('*').whereRaw('u.lot_id = l.id').as('units_tested'))
    .orderBy('l.created_at', 'desc').orderBy('l.code')
  return rows.map((r: any) => ({
    code: r.code, partNumber: r.part_number, productName: r.product_name, status: r.status,
    plannedQty: r.planned_qty, unitsTested: Number(r.units_tested), createdAt: r.created_at,
  }))
}
