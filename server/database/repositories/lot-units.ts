import type { Knex } from 'knex'

export const UNIT_SORTS = ['serial', 'verdict', 'attempts', 'runs', 'station', 'date', 'step'] as const
export type UnitSort = (typeof UNIT_SORTS)[number]
export const UNIT_VERDICTS = ['pass', 'fail', 'incomplete', 'untested'] as const
export type UnitVerdict = (typeof UNIT_VERDICTS)[number]

export type UnitQuery = {
  serial?: string; verdicts?: UnitVerdict[]; minAttempts?: number; station?: string; from?: Date; to?: Date
  sort: UnitSort; dir: 'asc' | 'desc'
}

export type UnitListRow = {
  serial: string; verdict: UnitVerdict; firstPass: boolean | null; stepsTested: number; lastStep: string | null
  maxAttempts: number; runs: number; station: string | null; lastTestedAt: Date | null
}

const SORT_COLUMN: Record<UnitSort, string> = {
  serial: 't.serial', verdict: 't.verdict', attempts: 't.max_attempts', runs: 't.runs', station: 't.station', date: 't.last_tested_at', step: 't.last_step',
}

/**
 * One row per unit of the lot. Verdict: fail when some step's latest result fails, pass once the product's
 * last step has passed with nothing failing, incomplete before that, untested without any run.
 */
function unitRows(db: Knex, lotId: number, lastStep: string) {
  const agg = db('unit_steps as us').join('units as uu', 'uu.id', 'us.unit_id').where('uu.lot_id', lotId).groupBy('us.unit_id')
    .select('us.unit_id',
      db.raw('SUM(us.attempts) AS runs'), db.raw('MAX(us.attempts) AS max_attempts'), db.raw('COUNT(*) AS steps_tested'),
      db.raw("MAX(us.latest_verdict = 'fail') AS any_fail"), db.raw("MAX(us.first_verdict = 'fail') AS first_fail"),
      db.raw('MAX(us.step = ?) AS at_last', [lastStep]), db.raw('MAX(us.latest_run_id) AS latest_run_id'))
  return db('units as u').leftJoin(agg.as('a'), 'a.unit_id', 'u.id')
    .leftJoin('test_runs as r', 'r.id', 'a.latest_run_id').leftJoin('stations as s', 's.id', 'r.station_id')
    .where('u.lot_id', lotId)
    .select('u.id', 'u.serial', 's.name as station', 'r.step as last_step', 'r.finished_at as last_tested_at',
      db.raw('COALESCE(a.runs, 0) AS runs'), db.raw('COALESCE(a.max_attempts, 0) AS max_attempts'), db.raw('COALESCE(a.steps_tested, 0) AS steps_tested'),
      db.raw("CASE WHEN a.unit_id IS NULL THEN NULL WHEN a.first_fail = 1 THEN 0 ELSE 1 END AS first_pass"),
      db.raw("CASE WHEN a.unit_id IS NULL THEN 'untested' WHEN a.any_fail = 1 THEN 'fail' WHEN a.at_last = 1 THEN 'pass' ELSE 'incomplete' END AS verdict"))
}

function filtered(db: Knex, lotId: number, lastStep: string, q: UnitQuery) {
  const t = db.from(unitRows(db, lotId, lastStep).as('t'))
  if (q.serial) t.whereRaw("t.serial LIKE ? ESCAPE '\\\\'", [`%${q.serial.replace(/[\\%_]/g, (c) => '\\' + c)}%`])
  if (q.verdicts?.length) t.whereIn('t.verdict', q.verdicts)
  if (q.minAttempts) t.where('t.max_attempts', '>=', q.minAttempts)
  if (q.station) t.where('t.station', q.station)
  if (q.from) t.where('t.last_tested_at', '>=', q.from)
  if (q.to) t.where('t.last_tested_at', '<', q.to)
  return t
}

function toRow(r: any): UnitListRow {
  return {
    serial: r.serial, verdict: r.verdict, firstPass: r.first_pass == null ? null : Number(r.first_pass) === 1, stepsTested: Number(r.steps_tested),
    lastStep: r.last_step ?? null, maxAttempts: Number(r.max_attempts), runs: Number(r.runs), station: r.station ?? null, lastTestedAt: r.last_tested_at ?? null,
  }
}

export async function listLotUnits(db: Knex, lotId: number, lastStep: string, q: UnitQuery, page: { limit: number; offset: number }): Promise<{ total: number; rows: UnitListRow[] }> {
  const [count] = await filtered(db, lotId, lastStep, q).count<{ n: number }[]>({ n: '*' })
  const rows = await filtered(db, lotId, lastStep, q).select('t.*')
    .orderBy(SORT_COLUMN[q.sort], q.dir).orderBy('t.serial', q.sort === 'serial' ? q.dir : 'asc')
    .limit(page.limit).offset(page.offset)
  return { total: Number(count!.n), rows: rows.map(toRow) }
}

export async function lotStationNames(db: Knex, lotId: number): Promise<string[]> {
  const rows = await db('test_runs as r').join('stations as s', 's.id', 'r.station_id').where('r.lot_id', lotId).distinct('s.name').orderBy('s.name')
  return rows.map((r: any) => r.name)
}
