import type { Knex } from 'knex'
import type { ParamRow } from '../../../shared/types/param-stats'
import { paramRowFromDb } from './param-stats'

export type LotHeader = {
  id: number; code: string; status: string; plannedQty: number | null; createdAt: Date
  productId: number; partNumber: string; productName: string; steps: string[]
}

/** A lot with the product facts its views need (part number, name, steps). */
export async function findLotHeader(db: Knex, code: string): Promise<LotHeader | undefined> {
  const r = await db('lots as l').join('products as p', 'p.id', 'l.product_id').where('l.code', code)
    .first('l.id', 'l.code', 'l.status', 'l.planned_qty', 'l.created_at', 'p.id as product_id', 'p.part_number', 'p.name as product_name', 'p.steps')
  if (!r) return undefined
  return {
    id: r.id, code: r.code, status: r.status, plannedQty: r.planned_qty, createdAt: r.created_at, productId: r.product_id,
    partNumber: r.part_number, productName: r.product_name, steps: typeof r.steps === 'string' ? JSON.parse(r.steps) : r.steps,
  }
}

export type StepStatsRow = { step: string; runs: number; units: number; firstPass: number; latestPass: number }

export async function stepStats(db: Knex, lotId: number): Promise<StepStatsRow[]> {
  const rows = await db('lot_step_stats').where({ lot_id: lotId }).groupBy('step')
    .select('step').sum({ runs: 'runs', units: 'units', first_pass: 'first_pass', latest_pass: 'latest_pass' })
  return rows.map((r: any) => ({ step: r.step, runs: Number(r.runs), units: Number(r.units), firstPass: Number(r.first_pass), latestPass: Number(r.latest_pass) }))
}

/** What the readers merge: a parameter row without its lot and its last-value bookkeeping. */
export type ParamStatsRow = Omit<ParamRow, 'lotId' | 'lastValue' | 'lastStartedAt'>

/** One row per (step, name, qualifier, revision, station): the caller merges the stations of each revision. */
export async function paramStats(db: Knex, lotId: number): Promise<ParamStatsRow[]> {
  return (await db('lot_param_stats').where({ lot_id: lotId })).map(paramRowFromDb)
}

/** The rows of one parameter of a lot (every revision and station). */
export async function paramStatsOfParameter(db: Knex, lotId: number, k: { step: string; name: string; qualifier: number }): Promise<ParamStatsRow[]> {
  return (await db('lot_param_stats').where({ lot_id: lotId, step: k.step, name: k.name, qualifier: k.qualifier })).map(paramRowFromDb)
}

export type SampleSummary = { name: string; qualifier: number; n: number; mean: number; min: number; max: number }

/**
 * Count, mean and extremes of the first-attempt sample of the given names at one step and revision of a lot, pooled
 * over the stations' statistics rows (rows without sample values hold no extremes of it).
 */
export async function sampleSummaries(db: Knex | Knex.Transaction, key: { lotId: number; step: string; revisionId: number; names: string[] }): Promise<SampleSummary[]> {
  const rows = await db('lot_param_stats').where({ lot_id: key.lotId, step: key.step, revision_id: key.revisionId }).whereIn('name', key.names).andWhere('n', '>', 0)
    .groupBy('name', 'qualifier').select('name', 'qualifier', db.raw('SUM(n) AS n, SUM(n * shift + sum_d) AS total, MIN(min_value) AS min_value, MAX(max_value) AS max_value'))
  return rows.map((r: any) => ({ name: r.name, qualifier: Number(r.qualifier), n: Number(r.n), mean: Number(r.total) / Number(r.n), min: Number(r.min_value), max: Number(r.max_value) }))
}
