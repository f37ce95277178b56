import type { Knex } from 'knex'
import { loadRunsWithMeasurements } from './runs'

export type UnitRecord = {
  id: number; serial: string; partNumber: string; productName: string; lot: string; createdAt: Date
  multiplier: number; inputHz: number; outputHz: number
}

/** Every unit carrying this serial, one per part number that uses it. */
export async function findUnitsBySerial(db: Knex, serial: string): Promise<UnitRecord[]> {
  const rows = await db('units as u').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .where('u.serial', serial).orderBy('p.part_number')
    .select('u.id', 'u.serial', 'u.created_at', 'p.part_number', 'p.name as product_name', 'l.code as lot_code', 'p.multiplier', 'p.input_hz', 'p.output_hz')
  return rows.map((r: any) => ({
    id: Number(r.id), serial: r.serial, partNumber: r.part_number, productName: r.product_name, lot: r.lot_code, createdAt: r.created_at,
    multiplier: Number(r.multiplier), inputHz: Number(r.input_hz), outputHz: Number(r.output_hz),
  }))
}

/** The unit's runs with measurements and traces, oldest start first (ties by arrival order). */
export async function loadUnitRuns(db: Knex, unitId: number) {
  const ids = (await db('test_runs').where({ unit_id: unitId }).orderBy('started_at').orderBy('id').select('id'))
    .map((r: any) => Number(r.id))
  const loaded = await loadRunsWithMeasurements(db, ids)
  const byId = new Map(loaded.map((x) => [Number(x.run.id), x]))
  return ids.map((id) => byId.get(id)!)
}

/** The phase-noise spot limits of the given revisions, by revision and step: the mask a run of that step was held to. */
export async function phaseNoiseMasksOf(db: Knex, revisionIds: number[]): Promise<Map<string, { offsetHz: number; usl: number }[]>> {
  const out = new Map<string, { offsetHz: number; usl: number }[]>()
  if (!revisionIds.length) return out
  const rows = await db('spec_limits').whereIn('revision_id', revisionIds).andWhere('name', 'phase_noise').whereNotNull('usl')
    .orderBy('qualifier').select('revision_id', 'step', 'qualifier', 'usl')
  for (const r of rows as any[]) {
    const k = `${r.revision_id}\u0000${r.step}`
    const list = out.get(k) ?? []
    list.push({ offsetHz: Number(r.qualifier), usl: Number(r.usl) })
    out.set(k, list)
  }
  return out
}
