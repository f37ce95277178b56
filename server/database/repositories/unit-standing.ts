// A unit's standing on its row and the per lot and station counters of standings (lot_unit_stats): the statements
// the write path sends, the recomputation from the stored rows (rebuild, calibration re-judging, a product's steps
// changed) and the reads of the lot views.
import type { Knex } from 'knex'
import type { Statement } from '../raw-connection'
import type { RunRef } from './run-writes'

export type UnitState = 'untested' | 'incomplete' | 'pass' | 'fail'

/** What a unit's row says of it; `latestRunId` is the step rows' highest latest run, the list's "last tested". */
export type Standing = {
  state: UnitState; completed: boolean; firstPass: boolean | null; stepsTested: number; maxAttempts: number; runs: number
  lastStep: string | null; lastStationId: number | null; lastTestedAt: Date | null; latestRunId: RunRef | null; ready: boolean; passedAll: boolean
}

export const COUNTERS = ['units', 'completed', 'passed', 'failed', 'in_progress', 'untested', 'retested', 'not_ready', 'passed_all'] as const
export type Counter = (typeof COUNTERS)[number]
export type CounterRow = { lotId: number; stationId: number; counts: Record<Counter, number>; firstRunAt: Date | null; lastRunAt: Date | null }

/** A unit's standings after a write, one multi-row statement (the rows exist and are locked: every row updates). */
export function standingsWrite(rows: { id: number; productId: number; lotId: number; serial: string; s: Standing }[]): Statement {
  const cols = ['state', 'completed', 'first_pass', 'steps_tested', 'max_attempts', 'runs', 'last_step', 'last_station_id', 'last_tested_at', 'latest_run_id', 'ready', 'passed_all']
  return {
    sql: `INSERT INTO units (id, product_id, lot_id, serial, ${cols.join(', ')}) VALUES ${rows.map(() => `(${new Array(4 + cols.length).fill('?').join(', ')})`).join(', ')}
      ON DUPLICATE KEY UPDATE ${cols.map((c) => `${c} = VALUES(${c})`).join(', ')}`,
    values: rows.flatMap(({ id, productId, lotId, serial, s }) => [id, productId, lotId, serial, s.state, s.completed, s.firstPass, s.stepsTested, s.maxAttempts, s.runs,
      s.lastStep, s.lastStationId, s.lastTestedAt, s.latestRunId, s.ready, s.passedAll]),
  }
}

/** Adds the deltas; rows in key order whoever writes them, so two writers wait rather than deadlock. */
export function unitCountersAdd(rows: CounterRow[]): Statement {
  const sorted = [...rows].sort((a, b) => a.lotId - b.lotId || a.stationId - b.stationId)
  return {
    sql: `INSERT INTO lot_unit_stats (lot_id, station_id, ${COUNTERS.join(', ')}, first_run_at, last_run_at) VALUES ${sorted.map(() => `(${new Array(4 + COUNTERS.length).fill('?').join(', ')})`).join(', ')}
      ON DUPLICATE KEY UPDATE ${COUNTERS.map((c) => `${c} = ${c} + VALUES(${c})`).join(', ')},
        first_run_at = LEAST(COALESCE(first_run_at, VALUES(first_run_at)), COALESCE(VALUES(first_run_at), first_run_at)),
        last_run_at = GREATEST(COALESCE(last_run_at, VALUES(last_run_at)), COALESCE(VALUES(last_run_at), last_run_at))`,
    values: sorted.flatMap((r) => [r.lotId, r.stationId, ...COUNTERS.map((c) => r.counts[c]), r.firstRunAt, r.lastRunAt]),
  }
}

const LAST_STEP = "JSON_UNQUOTE(JSON_EXTRACT(p.steps, CONCAT('$[', JSON_LENGTH(p.steps) - 1, ']')))"
const IN_PRODUCT = 'JSON_CONTAINS(p.steps, JSON_QUOTE(us.step))'

/** The standing of the units `where` picks (a condition on `uu` and `u`, the same units), recomputed from their step rows. */
function standingUpdate(where: string): string {
  return `UPDATE units u JOIN products p ON p.id = u.product_id
  LEFT JOIN (
    SELECT us.unit_id, COUNT(*) AS steps_tested, SUM(us.attempts) AS runs, MAX(us.attempts) AS max_attempts,
      MAX(us.latest_verdict = 'fail') AS any_fail, MAX(us.first_verdict = 'fail') AS first_fail, MAX(us.latest_run_id) AS latest_run_id,
      MAX(us.step = ${LAST_STEP}) AS at_last,
      SUM(${IN_PRODUCT} AND us.latest_verdict = 'pass' AND NOT r.calibration_lapsed) AS ready_steps,
      SUM(${IN_PRODUCT} AND us.latest_verdict = 'pass') AS pass_steps
    FROM unit_steps us JOIN units uu ON uu.id = us.unit_id JOIN products p ON p.id = uu.product_id JOIN test_runs r ON r.id = us.latest_run_id
    WHERE ${where.replaceAll('@', 'uu')}
    GROUP BY us.unit_id
  ) a ON a.unit_id = u.id
  LEFT JOIN test_runs lr ON lr.id = a.latest_run_id
  SET u.state = CASE WHEN a.unit_id IS NULL THEN 'untested' WHEN a.any_fail = 1 THEN 'fail' WHEN a.at_last = 1 THEN 'pass' ELSE 'incomplete' END,
    u.completed = COALESCE(a.at_last, 0), u.first_pass = IF(a.unit_id IS NULL, NULL, a.first_fail = 0),
    u.steps_tested = COALESCE(a.steps_tested, 0), u.max_attempts = COALESCE(a.max_attempts, 0), u.runs = COALESCE(a.runs, 0),
    u.last_step = lr.step, u.last_station_id = lr.station_id, u.last_tested_at = lr.finished_at, u.latest_run_id = a.latest_run_id,
    u.ready = (COALESCE(a.ready_steps, 0) = JSON_LENGTH(p.steps)),
    u.passed_all = (a.unit_id IS NOT NULL AND a.any_fail = 0 AND JSON_LENGTH(p.steps) > 0 AND a.pass_steps = JSON_LENGTH(p.steps))
  WHERE ${where.replaceAll('@', 'u')}`
}

/** One unit's part of the counters, from its row's columns (SQL over `units`, per row). */
const CONTRIBUTION = {
  units: '1', completed: 'completed', passed: "state = 'pass'", failed: "state = 'fail'", in_progress: "state IN ('untested', 'incomplete')", untested: "state = 'untested'",
  retested: 'max_attempts > 1', not_ready: 'ready = 0', passed_all: 'passed_all',
} satisfies Record<Counter, string>

/**
 * The lot's unit standings and counters computed again from its step rows and runs (bulk loads, repair). The caller
 * holds the lot's fold lease; the units' counts go on their last station's row, the run times on each station's.
 */
export async function rebuildUnitStandings(trx: Knex.Transaction, lotId: number): Promise<void> {
  await trx.raw(standingUpdate('@.lot_id = ?'), [lotId, lotId])
  await trx('lot_unit_stats').where({ lot_id: lotId }).del()
  await trx.raw(`INSERT INTO lot_unit_stats (lot_id, station_id, ${COUNTERS.join(', ')}, first_run_at, last_run_at)
    SELECT ?, station_id, ${COUNTERS.map((c) => `SUM(${c})`).join(', ')}, MIN(first_run_at), MAX(last_run_at) FROM (
      SELECT COALESCE(last_station_id, 0) AS station_id, ${COUNTERS.map((c) => `SUM(${CONTRIBUTION[c]}) AS ${c}`).join(', ')}, NULL AS first_run_at, NULL AS last_run_at
      FROM units WHERE lot_id = ? GROUP BY COALESCE(last_station_id, 0)
      UNION ALL
      SELECT station_id, ${COUNTERS.map(() => '0').join(', ')}, MIN(started_at), MAX(finished_at) FROM test_runs WHERE lot_id = ? GROUP BY station_id
    ) x GROUP BY station_id`, [lotId, lotId, lotId])
}

/**
 * Recomputes the standing of the given units from their rows and moves the counters by the difference: for a change
 * outside the write path (a run's calibration flag judged again). Locks the units first.
 */
export async function restandUnits(trx: Knex, unitIds: readonly number[]): Promise<void> {
  const ids = [...new Set(unitIds)].sort((a, b) => a - b)
  for (let i = 0; i < ids.length; i += 1000) {
    const part = ids.slice(i, i + 1000)
    const cols = `lot_id, COALESCE(last_station_id, 0) AS station_id, state IS NOT NULL AS counted, ${COUNTERS.map((c) => `(${CONTRIBUTION[c]}) AS ${c}`).join(', ')}`
    const before = await trx('units').whereIn('id', part).orderBy('id').forUpdate().select(trx.raw(cols))
    await trx.raw(standingUpdate(`@.id IN (${part.map(() => '?').join(', ')})`), [...part, ...part])
    const after = await trx('units').whereIn('id', part).select(trx.raw(cols))
    const by = new Map<string, CounterRow>()
    const add = (r: any, sign: number) => {
      if (!Number(r.counted)) return
      const k = `${r.lot_id}:${r.station_id}`
      let row = by.get(k)
      if (!row) { row = { lotId: Number(r.lot_id), stationId: Number(r.station_id), counts: Object.fromEntries(COUNTERS.map((c) => [c, 0])) as CounterRow['counts'], firstRunAt: null, lastRunAt: null }; by.set(k, row) }
      for (const c of COUNTERS) row.counts[c] += sign * Number(r[c])
    }
    for (const r of before) add(r, -1)
    // a unit without a standing yet (loaded in bulk) was not counted before; it is now
    for (const r of after) add({ ...r, counted: 1 }, 1)
    const rows = [...by.values()].filter((r) => COUNTERS.some((c) => r.counts[c] !== 0))
    if (rows.length) { const st = unitCountersAdd(rows); await trx.raw(st.sql, st.values as Knex.RawBinding[]) }
  }
}

/** The units of the runs stood again (their runs' calibration flags moved; a unit whose latest runs they are not stays as it was). */
export async function restandUnitsOfRuns(trx: Knex, runIds: readonly number[]): Promise<void> {
  const ids: number[] = []
  for (let i = 0; i < runIds.length; i += 1000) {
    ids.push(...(await trx('test_runs').whereIn('id', runIds.slice(i, i + 1000)).distinct('unit_id')).map((r: any) => Number(r.unit_id)))
  }
  if (ids.length) await restandUnits(trx, ids)
}

/** Every lot of the product recounted (its steps changed); the caller holds the product row, so no write runs meanwhile. */
export async function restandProductLots(trx: Knex.Transaction, productId: number): Promise<void> {
  for (const { id } of await trx('lots').where({ product_id: productId }).select('id')) await rebuildUnitStandings(trx, Number(id))
}

export type LotUnitCounts = Record<Counter, number> & { firstRunAt: Date | null; lastRunAt: Date | null }

/** The lot's counters: the sum of its station rows. */
export async function lotUnitCounts(db: Knex, lotId: number): Promise<LotUnitCounts> {
  const [r] = await db('lot_unit_stats').where({ lot_id: lotId })
    .select(...COUNTERS.map((c) => db.raw(`COALESCE(SUM(${c}), 0) AS ${c}`)), db.raw('MIN(first_run_at) AS first_run_at'), db.raw('MAX(last_run_at) AS last_run_at'))
  return { ...Object.fromEntries(COUNTERS.map((c) => [c, Number(r?.[c] ?? 0)])) as Record<Counter, number>, firstRunAt: r?.first_run_at ?? null, lastRunAt: r?.last_run_at ?? null }
}

/** Stations that have taken runs of the lot, by name (their counter rows, a handful per lot). */
export async function lotStationsOf(db: Knex, lotId: number): Promise<{ id: number; name: string }[]> {
  // sorted here: a few rows, and ordering them in SQL would make a temporary table
  return (await db('lot_unit_stats as c').join('stations as s', 's.id', 'c.station_id').where('c.lot_id', lotId).select('s.id', 's.name'))
    .map((r: any) => ({ id: Number(r.id), name: String(r.name) })).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0))
}
