// Prefix look-ups for the header's search: each reads one index (units.serial, lots.code, products.part_number).
import type { Knex } from 'knex'
import type { SearchLot, SearchPart, SearchUnit } from '../../../shared/types/search'

/** `q` as a LIKE prefix: its own % _ and \ are taken literally. */
export function likePrefix(q: string): string {
  return `${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`
}

export async function unitsByPrefix(db: Knex, q: string, limit: number): Promise<SearchUnit[]> {
  const rows = await db('units as u').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .where('u.serial', 'like', likePrefix(q)).orderBy('u.serial').orderBy('p.part_number').limit(limit)
    .select('u.serial', 'p.part_number', 'l.code')
  return rows.map((r: any) => ({ serial: r.serial, partNumber: r.part_number, lot: r.code }))
}

export async function lotsByPrefix(db: Knex, q: string, limit: number): Promise<SearchLot[]> {
  const rows = await db('lots as l').join('products as p', 'p.id', 'l.product_id')
    .where('l.code', 'like', likePrefix(q)).orderBy('l.code').limit(limit)
    .select('l.code', 'p.part_number', 'l.status', 'l.engineering')
  return rows.map((r: any) => ({ code: r.code, partNumber: r.part_number, status: r.status, engineering: !!r.engineering }))
}

export async function partsByPrefix(db: Knex, q: string, limit: number): Promise<SearchPart[]> {
  const rows = await db('products').where('part_number', 'like', likePrefix(q)).orderBy('part_number').limit(limit).select('part_number', 'name')
  return rows.map((r: any) => ({ partNumber: r.part_number, name: r.name }))
}
