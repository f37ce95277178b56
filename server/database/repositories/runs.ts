import type { Knex } from 'knex'

export async function findRunHashByUuid(db: Knex, uuid: string): Promise<{ id: number; bodyHash: string } | undefined> {
  const r = await db('test_runs').where({ uuid }).first('id', 'body_hash')
  return r ? { id: Number(r.id), bodyHash: r.body_hash } : undefined
}

/** The stored runs with everything a result view shows, by internal id. */
export async function loadRunsWithMeasurements(db: Knex, runIds: number[]) {
  if (!runIds.length) return []
  const runs = await db('test_runs as r')
    .join('units as u', 'u.id', 'r.unit_id').join('products as p', 'p.id', 'u.product_id')
    .join('lots as l', 'l.id', 'r.lot_id').join('stations as s', 's.id', 'r.station_id')
    .leftJoin('spec_revisions as sr', 'sr.id', 'r.revision_id')
    .whereIn('r.id', runIds)
    .select('r.*', 'u.serial', 'p.part_number', 'l.code as lot_code', 's.name as station_name', 'sr.revision as revision_number', 'sr.approved_at as revision_approved_at')
  const ms = await db('measurements').whereIn('run_id', runIds).orderBy('id')
  const traces = await db('traces').whereIn('run_id', runIds).orderBy('id')
  return runs.map((r: any) => ({
    run: r,
    measurements: ms.filter((m: any) => Number(m.run_id) === Number(r.id)),
    traces: traces.filter((t: any) => Number(t.run_id) === Number(r.id)),
  }))
}
