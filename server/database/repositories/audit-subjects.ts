// The names of the things audit entries are about, read for one page of entries: one query per kind present.
import type { Knex } from 'knex'

export type SubjectRow = { name: string; detail?: string | null; link?: string | number | null }

type Reader = (db: Knex, ids: string[]) => Promise<[string, SubjectRow][]>

const numeric = (ids: string[]) => ids.filter((id) => /^\d{1,10}$/.test(id)).map(Number)

const READERS: Record<string, Reader> = {
  spec_revision: async (db, ids) => (await db('spec_revisions as r').join('products as p', 'p.id', 'r.product_id').whereIn('r.id', numeric(ids))
    .select('r.id', 'r.revision', 'p.part_number', 'p.name'))
    .map((r: any) => [String(r.id), { name: `${r.part_number} rev ${r.revision}`, detail: r.name }]),
  product: async (db, ids) => (await db('products').whereIn('part_number', ids).select('part_number', 'name'))
    .map((r: any) => [r.part_number, { name: r.part_number, detail: r.name }]),
  lot: async (db, ids) => (await db('lots as l').join('products as p', 'p.id', 'l.product_id').whereIn('l.code', ids).select('l.code', 'p.part_number'))
    .map((r: any) => [r.code, { name: r.code, detail: r.part_number }]),
  test_run: async (db, ids) => (await db('test_runs as t').join('units as u', 'u.id', 't.unit_id').join('products as p', 'p.id', 'u.product_id')
    .whereIn('t.id', numeric(ids)).select('t.id', 't.step', 't.attempt', 'u.serial', 'p.part_number'))
    .map((r: any) => [String(r.id), { name: `${r.part_number} ${r.serial}`, detail: `${r.step}, attempt ${r.attempt}`, link: `${r.part_number}/${r.serial}` }]),
  station: async (db, ids) => (await db('stations').whereIn('id', numeric(ids)).select('id', 'name'))
    .map((r: any) => [String(r.id), { name: r.name }]),
  instrument: async (db, ids) => (await db('instruments').whereIn('id', numeric(ids)).select('id', 'asset_number', 'kind', 'model'))
    .map((r: any) => [String(r.id), { name: r.asset_number, detail: `${r.kind}, ${r.model}` }]),
  calibration_impact: async (db, ids) => (await db('calibration_impacts as c').join('instruments as i', 'i.id', 'c.instrument_id').whereIn('c.id', numeric(ids)).select('c.id', 'i.asset_number'))
    .map((r: any) => [String(r.id), { name: `review of ${r.asset_number}` }]),
  certificate: async (db, ids) => (await db('certificates as c').join('units as u', 'u.id', 'c.unit_id').join('products as p', 'p.id', 'u.product_id')
    .whereIn('c.number', ids).select('c.number', 'c.shipment_id', 'u.serial', 'p.part_number'))
    .map((r: any) => [r.number, { name: r.number, detail: `${r.part_number} ${r.serial}`, link: r.shipment_id }]),
  shipment: async (db, ids) => (await db('shipments as s').join('customers as c', 'c.id', 's.customer_id').whereIn('s.code', ids).select('s.id', 's.code', 'c.name'))
    .map((r: any) => [r.code, { name: r.code, detail: r.name, link: r.id }]),
  customer: async (db, ids) => (await db('customers').whereIn('id', numeric(ids)).select('id', 'code', 'name'))
    .map((r: any) => [String(r.id), { name: r.name, detail: r.code }]),
  user: async (db, ids) => (await db('users').whereIn('id', numeric(ids)).select('id', 'name', 'email'))
    .map((r: any) => [String(r.id), { name: r.name, detail: r.email }]),
  alert_rule: async (db, ids) => (await db('alert_rules').whereIn('id', numeric(ids)).select('id', 'name'))
    .map((r: any) => [String(r.id), { name: r.name }]),
  alert_firing: async (db, ids) => (await db('alert_firings as f').join('alert_rules as r', 'r.id', 'f.rule_id').whereIn('f.id', numeric(ids)).select('f.id', 'f.subject_label', 'r.name'))
    .map((r: any) => [String(r.id), { name: r.name, detail: r.subject_label }]),
  import_job: async (db, ids) => (await db('import_jobs').whereIn('id', numeric(ids)).select('id', 'file_name'))
    .map((r: any) => [String(r.id), { name: r.file_name }]),
}

/** For each entity kind, the rows of the ids asked for that still exist (kinds without a table to read are left out). */
export async function auditSubjectRows(db: Knex, idsByEntity: Map<string, string[]>): Promise<Map<string, Map<string, SubjectRow>>> {
  const kinds = [...idsByEntity].filter(([entity, ids]) => READERS[entity] && ids.length)
  const read = await Promise.all(kinds.map(([entity, ids]) => READERS[entity]!(db, [...new Set(ids)])))
  return new Map(kinds.map(([entity], i) => [entity, new Map(read[i])]))
}
