// The drift sums per lot × step × parameter × revision × population (lot_param_trend), and the parameter groups a
// late value left to be repaired (lot_stats_repair): their moving ranges and drift sums are taken again from one
// range of measurements_series_idx.
import type { Knex } from 'knex'
import { numberLiteral, textLiteral, utcLiteral } from '../sql-literals'
import type { TrendGroup, TrendRow } from '../../services/ingest/param-trend-merge'

const groupWhere = (g: TrendGroup) => ({ lot_id: g.lotId, step: g.step, name: g.name, qualifier: g.qualifier, revision_id: g.revisionId })

function trendRowFromDb(r: any): TrendRow {
  return {
    lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), allAttempts: !!r.all_attempts,
    n: Number(r.n), shift: Number(r.shift), sumRd: Number(r.sum_rd), sumD: Number(r.sum_d), sumSqD: Number(r.sumsq_d),
    lastStartedAt: r.last_started_at == null ? null : new Date(r.last_started_at).getTime(), lastId: r.last_id == null ? null : Number(r.last_id), stale: !!r.stale,
  }
}

export async function trendRowsOfLot(trx: Knex.Transaction, lotId: number, steps: string[]): Promise<TrendRow[]> {
  if (!steps.length) return []
  return (await trx('lot_param_trend').where({ lot_id: lotId }).whereIn('step', steps)).map(trendRowFromDb)
}

/** The drift sums of one parameter of a lot (every revision, both populations). */
export async function trendRowsOfParameter(db: Knex, k: Omit<TrendGroup, 'revisionId'>): Promise<TrendRow[]> {
  return (await db('lot_param_trend').where({ lot_id: k.lotId, step: k.step, name: k.name, qualifier: k.qualifier })).map(trendRowFromDb)
}

const COLUMNS = ['lot_id', 'step', 'name', 'qualifier', 'revision_id', 'all_attempts', 'n', 'shift', 'sum_rd', 'sum_d', 'sumsq_d', 'last_started_at', 'last_id', 'stale']

export async function writeTrendRows(trx: Knex.Transaction, rows: TrendRow[]): Promise<void> {
  if (!rows.length) return
  if (!rows.every((r) => [r.lotId, r.revisionId, r.n].every(Number.isInteger) && (r.lastId === null || Number.isInteger(r.lastId)))) throw new TypeError('drift row keys and counts must be integers')
  const tuple = (r: TrendRow) => `(${r.lotId},${textLiteral(r.step)},${textLiteral(r.name)},${numberLiteral(r.qualifier)},${r.revisionId},${r.allAttempts ? 1 : 0},`
    + `${r.n},${numberLiteral(r.shift)},${numberLiteral(r.sumRd)},${numberLiteral(r.sumD)},${numberLiteral(r.sumSqD)},`
    + `${r.lastStartedAt === null ? 'NULL' : utcLiteral(new Date(r.lastStartedAt))},${r.lastId ?? 'NULL'},${r.stale ? 1 : 0})`
  for (let i = 0; i < rows.length; i += 1000) {
    await trx.raw(`INSERT INTO lot_param_trend (${COLUMNS.join(', ')}) VALUES ${rows.slice(i, i + 1000).map(tuple).join(',')}
      ON DUPLICATE KEY UPDATE ${COLUMNS.slice(6).map((c) => `${c} = VALUES(${c})`).join(', ')}`)
  }
}

/** Queues groups for a repair (idempotent). */
export async function queueRepairs(trx: Knex.Transaction, groups: TrendGroup[]): Promise<void> {
  if (!groups.length) return
  await trx.raw(`INSERT IGNORE INTO lot_stats_repair (lot_id, step, name, qualifier, revision_id) VALUES ${groups.map(() => '(?, ?, ?, ?, ?)').join(', ')}`,
    groups.flatMap((g) => [g.lotId, g.step, g.name, g.qualifier, g.revisionId]))
}

/** Every parameter of a lot's step and revision: a rebuilt first-attempt sample changes their drift sums. */
export async function queueRepairsOfRevision(trx: Knex.Transaction, lotId: number, step: string, revisionId: number): Promise<void> {
  await trx.raw(`INSERT IGNORE INTO lot_stats_repair (lot_id, step, name, qualifier, revision_id)
    SELECT DISTINCT lot_id, step, name, qualifier, revision_id FROM lot_param_stats WHERE lot_id = ? AND step = ? AND revision_id = ?`, [lotId, step, revisionId])
}

export type QueuedRepair = TrendGroup & { values: number }

/** The lot's queued repairs with how many values each would read (its all-attempt count). */
export async function queuedRepairs(trx: Knex, lotId: number): Promise<QueuedRepair[]> {
  const [rows] = await trx.raw(`SELECT q.lot_id, q.step, q.name, q.qualifier, q.revision_id, COALESCE(SUM(s.a_n), 0) AS n_values
    FROM lot_stats_repair q LEFT JOIN lot_param_stats s ON s.lot_id = q.lot_id AND s.step = q.step AND s.name = q.name AND s.qualifier = q.qualifier AND s.revision_id = q.revision_id
    WHERE q.lot_id = ? GROUP BY q.lot_id, q.step, q.name, q.qualifier, q.revision_id`, [lotId])
  return (rows as any[]).map((r) => ({ lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), values: Number(r.n_values) }))
}

/** Whether one group of a lot awaits a repair. */
export async function repairQueued(db: Knex, g: TrendGroup): Promise<boolean> {
  return (await db('lot_stats_repair').where(groupWhere(g)).first('lot_id')) !== undefined
}

export async function forgetRepair(trx: Knex.Transaction, g: TrendGroup): Promise<void> {
  await trx('lot_stats_repair').where(groupWhere(g)).del()
}

export type GroupValue = { stationId: number; firstAttempt: boolean; value: number; startedAt: number; id: number }

/**
 * The group's plausible values in test order, one range of measurements_series_idx, leaving out runs still queued
 * for the fold (it applies them after). With `after`, only the values after that one, at most `limit`: what a late
 * value's insertion moves up one rank.
 */
export async function groupValues(trx: Knex.Transaction, g: TrendGroup, after?: { from: { startedAt: number; id: number }; limit: number }): Promise<GroupValue[]> {
  const at = (ms: number) => new Date(ms).toISOString().replace('T', ' ').replace('Z', '')
  const range = after ? [at(after.from.startedAt), at(after.from.startedAt), after.from.id] : []
  const [rows] = await trx.raw(`SELECT station_id, first_attempt, value, TIMESTAMPDIFF(MICROSECOND, '1970-01-01 00:00:00', started_at) DIV 1000 AS started_ms, id
    FROM measurements FORCE INDEX (measurements_series_idx)
    WHERE lot_id = ? AND step = ? AND name = ? AND qualifier = ? AND revision_id = ? AND NOT implausible
      ${after ? 'AND (started_at > ? OR (started_at = ? AND id > ?))' : ''}
      AND run_id NOT IN (SELECT run_id FROM lot_stats_pending WHERE lot_id = ?)
    ORDER BY started_at, id ${after ? 'LIMIT ?' : ''}`,
  [g.lotId, g.step, g.name, g.qualifier, g.revisionId, ...range, g.lotId, ...(after ? [after.limit] : [])])
  return (rows as any[]).map((r) => ({ stationId: Number(r.station_id), firstAttempt: !!r.first_attempt, value: Number(r.value), startedAt: Number(r.started_ms), id: Number(r.id) }))
}

export type StationRanges = {
  stationId: number
  first: { sum: number; count: number; last: { value: number; startedAt: number } | null }
  all: { sum: number; count: number; last: { value: number; startedAt: number } | null }
}

/** Writes the moving ranges of a group's station rows, both populations, and clears their stale flags. */
export async function writeStationRanges(trx: Knex.Transaction, g: TrendGroup, stations: StationRanges[]): Promise<void> {
  const time = (ms: number | undefined) => ms === undefined ? null : new Date(ms)
  for (const s of stations) {
    await trx('lot_param_stats').where({ ...groupWhere(g), station_id: s.stationId }).update({
      mr_sum: s.first.sum, mr_n: s.first.count, last_value: s.first.last?.value ?? null, last_started_at: time(s.first.last?.startedAt), mr_stale: false,
      a_mr_sum: s.all.sum, a_mr_n: s.all.count, a_last_value: s.all.last?.value ?? null, a_last_started_at: time(s.all.last?.startedAt), a_mr_stale: false,
    })
  }
}

/** The parameter groups of a lot (from its statistics rows), for a rebuild of the drift sums. */
export async function groupsOfLot(trx: Knex.Transaction, lotId: number): Promise<TrendGroup[]> {
  const rows = await trx('lot_param_stats').where({ lot_id: lotId }).distinct('step', 'name', 'qualifier', 'revision_id')
  return rows.map((r: any) => ({ lotId, step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id) }))
}

/** Drops one group's drift rows (both populations) before they are written again from its values. */
export async function forgetTrendOfGroup(trx: Knex.Transaction, g: TrendGroup): Promise<void> {
  await trx('lot_param_trend').where(groupWhere(g)).del()
}

export async function forgetTrendOfLot(trx: Knex.Transaction, lotId: number): Promise<void> {
  await trx('lot_param_trend').where({ lot_id: lotId }).del()
  await trx('lot_stats_repair').where({ lot_id: lotId }).del()
}
