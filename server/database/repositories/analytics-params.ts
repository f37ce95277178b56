// Reads of the per-lot × station aggregates for cross-lot and cross-station views.
import type { Knex } from 'knex'
import type { StatRow } from '../../../shared/types/param-stats'

export type LotOfPart = { id: number; code: string; status: string; engineering: boolean; createdAt: Date; firstRunAt: Date | null; lastRunAt: Date | null }

/**
 * The part's lots with the span of their runs at one step (min/max from the (lot, step, started_at) index);
 * engineering lots only when asked for.
 */
export async function lotsOfProduct(db: Knex, productId: number, step: string, includeEngineering = false): Promise<LotOfPart[]> {
  const rows = await db('lots as l').where('l.product_id', productId).modify((q) => { if (!includeEngineering) q.where('l.engineering', false) })
    .select('l.id', 'l.code', 'l.status', 'l.engineering', 'l.created_at',
      db('test_runs as r').min('r.started_at').whereRaw('r.lot_id = l.id').andWhere('r.step', step).as('first_run'),
      db('test_runs as r').max('r.started_at').whereRaw('r.lot_id = l.id').andWhere('r.step', step).as('last_run'))
  return rows.map((r: any) => ({
    id: r.id, code: r.code, status: r.status, engineering: !!r.engineering, createdAt: new Date(r.created_at),
    firstRunAt: r.first_run ? new Date(r.first_run) : null, lastRunAt: r.last_run ? new Date(r.last_run) : null,
  }))
}

export type ParamKey = { step: string; name: string; qualifier: number }
export type StationStatRow = StatRow & { lotId: number; revisionId: number; stationId: number; stationName: string; unit: string; mrStale: boolean }

/** lot_param_stats rows of one parameter, for the given lots (one row per lot × revision × station). */
export async function paramRowsForLots(db: Knex, lotIds: number[], key: ParamKey): Promise<StationStatRow[]> {
  if (!lotIds.length) return []
  const rows = await db('lot_param_stats as s').join('stations as st', 'st.id', 's.station_id')
    .whereIn('s.lot_id', lotIds).andWhere({ 's.step': key.step, 's.name': key.name, 's.qualifier': key.qualifier })
    .select('s.*', 'st.name as station_name')
    .orderBy('s.lot_id').orderBy('st.name')
  return rows.map((r: any) => ({
    lotId: r.lot_id, revisionId: Number(r.revision_id), stationId: r.station_id, stationName: r.station_name, unit: r.unit, n: r.n, shift: r.shift, sumD: r.sum_d,
    sumSqD: r.sumsq_d, min: r.min_value, max: r.max_value, mrSum: r.mr_sum, mrN: r.mr_n, mrStale: !!r.mr_stale,
    outOfSpec: r.out_of_spec, failAll: r.fail_all,
  }))
}

export type LotRef = { id: number; code: string; productId: number; partNumber: string; productName: string; steps: string[]; status: string }

export async function lotRef(db: Knex, code: string): Promise<LotRef | undefined> {
  const r = await db('lots as l').join('products as p', 'p.id', 'l.product_id').where('l.code', code)
    .first('l.id', 'l.code', 'l.status', 'p.id as product_id', 'p.part_number', 'p.name as product_name', 'p.steps')
  if (!r) return undefined
  return {
    id: r.id, code: r.code, status: r.status, productId: r.product_id, partNumber: r.part_number, productName: r.product_name,
    steps: Array.isArray(r.steps) ? r.steps : JSON.parse(String(r.steps)),
  }
}

export type SampleCount = { revisionId: number; name: string; qualifier: number; n: number }

/** Sample sizes (plausible first attempts) per revision, name and qualifier at one step of a lot, from the aggregates. */
export async function sampleCounts(db: Knex, lotId: number, step: string, names: string[]): Promise<SampleCount[]> {
  const rows = await db('lot_param_stats').where({ lot_id: lotId, step }).whereIn('name', names)
    .groupBy('revision_id', 'name', 'qualifier').select('revision_id', 'name', 'qualifier').sum({ n: 'n' })
  return rows.map((r: any) => ({ revisionId: Number(r.revision_id), name: r.name, qualifier: Number(r.qualifier), n: Number(r.n) }))
}

/** The part's lot ids; engineering lots only when asked for. */
export async function lotIdsOfProduct(db: Knex, productId: number, includeEngineering = false): Promise<number[]> {
  return (await db('lots').where({ product_id: productId }).modify((q) => { if (!includeEngineering) q.where('engineering', false) }).select('id')).map((r: any) => r.id)
}
