// What the alert evaluator reads: marks, enabled rules, the latest values of one parameter or the latest first
// attempts at one step of a product (through the per-lot indexes, newest lots first), and the state of stations.
import type { Knex } from 'knex'
import type { AlertKind } from '../../../shared/utils/alert-kinds'

export type MarkRow = { productId: number; seq: number }
export type RuleRow = {
  id: number; name: string; kind: AlertKind; productId: number | null; partNumber: string | null; stationId: number | null; step: string | null
  parameter: string | null; qualifier: number; threshold: number | null; windowUnits: number | null; horizonUnits: number | null
  silentMinutes: number | null; controlRules: number
}
export type ValueRow = { id: number; value: number; startedAt: Date; runId: string; serial: string; stationId: number; station: string; lotId: number; lot: string }
export type FirstAttemptRow = { passed: boolean; startedAt: Date; lotId: number; lot: string }

/** How many of a product's newest lots the window of a rule is gathered from. */
export const LOTS_PER_WINDOW = 8

export async function readMarks(db: Knex, limit: number): Promise<MarkRow[]> {
  const rows = await db('alert_marks').orderBy('marked_at').limit(limit).select('product_id', 'seq')
  return rows.map((r: any) => ({ productId: Number(r.product_id), seq: Number(r.seq) }))
}

/** Drops the mark only if no fold marked the product again while it was being evaluated. */
export async function clearMark(db: Knex, m: MarkRow): Promise<boolean> {
  return (await db('alert_marks').where({ product_id: m.productId, seq: m.seq }).delete()) === 1
}

const ruleColumns = ['r.id', 'r.name', 'r.kind', 'r.product_id', 'p.part_number', 'r.station_id', 'r.step', 'r.parameter', 'r.qualifier', 'r.threshold',
  'r.window_units', 'r.horizon_units', 'r.silent_minutes', 'r.control_rules']
const toRule = (r: any): RuleRow => ({
  id: r.id, name: r.name, kind: r.kind, productId: r.product_id, partNumber: r.part_number ?? null, stationId: r.station_id, step: r.step, parameter: r.parameter,
  qualifier: r.qualifier ?? 0, threshold: r.threshold, windowUnits: r.window_units, horizonUnits: r.horizon_units, silentMinutes: r.silent_minutes,
  controlRules: r.control_rules ?? 0,
})

export async function enabledRules(db: Knex, q: { productId?: number; kinds: readonly AlertKind[] }): Promise<RuleRow[]> {
  const sel = db('alert_rules as r').leftJoin('products as p', 'p.id', 'r.product_id').where('r.enabled', true).whereIn('r.kind', q.kinds as AlertKind[])
  if (q.productId !== undefined) sel.where('r.product_id', q.productId)
  return (await sel.orderBy('r.id').select(ruleColumns)).map(toRule)
}

/** The product's newest production lots: engineering and trial lots never feed a rule's window. */
export async function newestLots(db: Knex, productId: number): Promise<{ id: number; code: string }[]> {
  return db('lots').where({ product_id: productId, engineering: false }).orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id', order: 'desc' }]).limit(LOTS_PER_WINDOW).select('id', 'code')
}

/**
 * The last `n` first-attempt, plausible values of one parameter over the given lots, oldest first: one statement,
 * each lot's tail of each revision read backwards from the end of its measurements_series_idx range. With
 * `revisionId`, only values judged by that revision.
 */
export async function lastValues(db: Knex, lotIds: readonly number[], k: { step: string; name: string; qualifier: number; revisionId?: number }, n: number): Promise<ValueRow[]> {
  if (!lotIds.length || n <= 0) return []
  // the index orders by time within a revision: every revision's tail is read, then merged
  const series = k.revisionId === undefined ? await revisionsOfParameter(db, lotIds, k) : lotIds.map((lotId) => ({ lotId, revisionId: k.revisionId! }))
  if (!series.length) return []
  const part = `(SELECT m.id, m.value, m.started_at, m.run_id, m.station_id, m.lot_id FROM measurements m
    WHERE m.lot_id = ? AND m.step = ? AND m.name = ? AND m.qualifier = ? AND m.revision_id = ? AND m.first_attempt = 1 AND m.implausible = 0
    ORDER BY m.started_at DESC, m.id DESC LIMIT ${Number(n)})`
  const binds = series.flatMap((s) => [s.lotId, k.step, k.name, k.qualifier, s.revisionId])
  const [rows] = await db.raw(
    `SELECT t.id, t.value, t.started_at, r.uuid, u.serial, t.station_id, s.name AS station, t.lot_id, l.code AS lot
     FROM (${series.map(() => part).join(' UNION ALL ')}) t
     JOIN test_runs r ON r.id = t.run_id JOIN units u ON u.id = r.unit_id JOIN stations s ON s.id = t.station_id JOIN lots l ON l.id = t.lot_id
     ORDER BY t.started_at DESC, t.id DESC LIMIT ${Number(n)}`, binds)
  return (rows as any[]).reverse().map((r) => ({
    id: Number(r.id), value: r.value, startedAt: r.started_at, runId: r.uuid, serial: r.serial, stationId: r.station_id, station: r.station, lotId: r.lot_id, lot: r.lot,
  }))
}

/**
 * The revisions a parameter's folded values were judged by in each lot, from the statistics rows. A run of a new
 * revision not yet folded is missed until its fold, which marks the product for another evaluation anyway.
 */
async function revisionsOfParameter(db: Knex, lotIds: readonly number[], k: { step: string; name: string; qualifier: number }): Promise<{ lotId: number; revisionId: number }[]> {
  const rows = await db('lot_param_stats').whereIn('lot_id', lotIds).where({ step: k.step, name: k.name, qualifier: k.qualifier }).where('n', '>', 0).distinct('lot_id', 'revision_id')
  return rows.map((r: any) => ({ lotId: Number(r.lot_id), revisionId: Number(r.revision_id) }))
}

/** The last `n` first attempts at a step over the given lots (attempt 1 is the first by test time), oldest first. */
export async function lastFirstAttempts(db: Knex, lotIds: readonly number[], step: string, n: number): Promise<FirstAttemptRow[]> {
  if (!lotIds.length || n <= 0) return []
  const part = `(SELECT r.id, r.server_verdict, r.started_at, r.lot_id FROM test_runs r WHERE r.lot_id = ? AND r.step = ? AND r.attempt = 1
    ORDER BY r.started_at DESC, r.id DESC LIMIT ${Number(n)})`
  const [rows] = await db.raw(
    `SELECT t.server_verdict, t.started_at, t.lot_id, l.code AS lot FROM (${lotIds.map(() => part).join(' UNION ALL ')}) t JOIN lots l ON l.id = t.lot_id
     ORDER BY t.started_at DESC, t.id DESC LIMIT ${Number(n)}`, lotIds.flatMap((id) => [id, step]))
  return (rows as any[]).reverse().map((r) => ({ passed: r.server_verdict === 'pass', startedAt: r.started_at, lotId: r.lot_id, lot: r.lot }))
}

/** The lot's frozen control baseline of the parameter, if one was set. */
export async function frozenBaseline(db: Knex, lotId: number, k: { step: string; name: string; qualifier: number }): Promise<{ centre: number; sigma: number } | null> {
  const r = await db('control_baselines').where({ lot_id: lotId, step: k.step, name: k.name, qualifier: k.qualifier }).first('centre', 'sigma')
  return r ? { centre: Number(r.centre), sigma: Number(r.sigma) } : null
}

export async function stationNames(db: Knex, stationId: number | null): Promise<{ id: number; name: string }[]> {
  const q = db('stations').orderBy('id').select('id', 'name')
  return stationId === null ? q : q.where({ id: stationId })
}

/** A station's latest run by test end (station_id, finished_at index) and when it was posted. */
export async function latestRunOfStation(db: Knex, stationId: number): Promise<{ id: number; receivedAt: Date } | null> {
  const r = await db('test_runs').where({ station_id: stationId }).orderBy([{ column: 'finished_at', order: 'desc' }, { column: 'id', order: 'desc' }]).first('id', 'received_at')
  return r ? { id: Number(r.id), receivedAt: r.received_at } : null
}

/** Codes of the open lots a station tested in since `since`. */
export async function openLotsTestedSince(db: Knex, stationId: number, since: Date): Promise<string[]> {
  const rows = await db('test_runs as r').join('lots as l', 'l.id', 'r.lot_id').where('r.station_id', stationId).where('r.finished_at', '>=', since)
    .where('l.status', 'open').distinct('l.code').orderBy('l.code')
  return rows.map((r: any) => r.code)
}

/** The previous firing of a rule about a subject (rule_id, subject, raised_at index): when, and its figures. */
export async function lastFiring(db: Knex, ruleId: number, subject: string): Promise<{ raisedAt: Date; figures: { label: string; value: unknown }[] } | null> {
  const r = await db('alert_firings').where({ rule_id: ruleId, subject }).orderBy('raised_at', 'desc').first('raised_at', 'figures')
  if (!r) return null
  return { raisedAt: new Date(r.raised_at), figures: typeof r.figures === 'string' ? JSON.parse(r.figures) : r.figures }
}
