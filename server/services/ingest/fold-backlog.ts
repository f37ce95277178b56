// What a lot's statistics rows do not include yet: runs queued for the fold, rows awaiting a rebuild after a run
// became a unit's first attempt, and groups whose moving ranges or drift sums await a repair after a late value.
import type { Knex } from 'knex'
import { rebuildMarksOfLot, type RebuildMark } from '../../database/repositories/param-stats'
import { queuedRepairs } from '../../database/repositories/param-trend'

export type LotBacklog = {
  lotId: number
  /** when the reader asked: the rows include every run stored before it, except `runs` of them */
  asOf: Date
  /** the newest run queued when the reader asked (it folds up to this one), null when none was */
  upTo: number | null
  runs: number
  rebuilds: number
  repairs: number
}

/** The lot's backlog; with `upTo`, only runs queued up to that one count (those stored after the reader asked do not). */
export async function lotBacklog(db: Knex, lotId: number, asOf: Date, upTo?: number | null): Promise<LotBacklog> {
  const runs = db('lot_stats_pending').where({ lot_id: lotId })
  if (upTo !== undefined) runs.andWhere('run_id', '<=', upTo ?? 0)
  const [queued, rebuilds, repairs] = await Promise.all([
    runs.first(db.raw('COUNT(*) AS n, MAX(run_id) AS newest')),
    db('lot_stats_rebuild').where({ lot_id: lotId }).first(db.raw('COUNT(*) AS n')),
    db('lot_stats_repair').where({ lot_id: lotId }).first(db.raw('COUNT(*) AS n')),
  ])
  return {
    lotId, asOf, upTo: upTo !== undefined ? upTo : (queued?.newest == null ? null : Number(queued.newest)),
    runs: Number(queued?.n ?? 0), rebuilds: Number(rebuilds?.n ?? 0), repairs: Number(repairs?.n ?? 0),
  }
}

/** How many values a rebuild of a marked station's rows reads. */
export async function rebuildSize(trx: Knex, m: RebuildMark): Promise<number> {
  const r = await trx('lot_param_stats').where({ lot_id: m.lotId, step: m.step, revision_id: m.revisionId, station_id: m.stationId }).first(trx.raw('COALESCE(SUM(a_n), 0) AS n'))
  return Number(r?.n ?? 0)
}

/** Whether a rebuild or a repair of at most `maxValues` values waits (a reader does those itself). */
export async function smallRepairsWaiting(db: Knex, lotId: number, maxValues: number): Promise<boolean> {
  if ((await queuedRepairs(db, lotId)).some((g) => g.values <= maxValues)) return true
  for (const m of await rebuildMarksOfLot(db, lotId)) if (await rebuildSize(db, m) <= maxValues) return true
  return false
}
