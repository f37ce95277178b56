// The lot's units list, read from each unit's standing on its row (kept by the write path) through the indexes
// (lot_id, <sort column>, serial): a page is an index range, never a sort of the lot.
import type { Knex } from 'knex'
import type { Counter } from './unit-standing'

export const UNIT_SORTS = ['serial', 'verdict', 'attempts', 'runs', 'station', 'date', 'step'] as const
export type UnitSort = (typeof UNIT_SORTS)[number]
export const UNIT_VERDICTS = ['pass', 'fail', 'incomplete', 'untested'] as const
export type UnitVerdict = (typeof UNIT_VERDICTS)[number]

export type UnitQuery = {
  /** serial: its start (an index range), or with `serialMatch: 'contains'` anywhere in it (reads every unit of the lot) */
  serial?: string; serialMatch?: 'prefix' | 'contains'
  verdicts?: UnitVerdict[]; minAttempts?: number; station?: string; from?: Date; to?: Date
  sort: UnitSort; dir: 'asc' | 'desc'
}

export type UnitListRow = {
  serial: string; verdict: UnitVerdict; firstPass: boolean | null; stepsTested: number; lastStep: string | null
  maxAttempts: number; runs: number; station: string | null; lastTestedAt: Date | null
}

/** Where the list stands in its order: the sort column's value and the serial of the last row read. */
export type UnitCursor = { v: string | number | Date | null; s: string }

/** Station sorts by the station's id (units of one station together), the index's order. */
export const SORT_COLUMN: Record<UnitSort, string> = {
  serial: 'serial', verdict: 'state', attempts: 'max_attempts', runs: 'runs', station: 'last_station_id', date: 'last_tested_at', step: 'last_step',
}

const LIST_COLUMNS = ['u.serial', 'u.state', 'u.first_pass', 'u.steps_tested', 'u.last_step', 'u.max_attempts', 'u.runs', 'u.last_station_id', 'u.last_tested_at']

const likeEscape = (s: string) => s.replace(/[\\%_]/g, (c) => '\\' + c)

/** The filters on `units as u` of one lot; `stationId` is the station filter's name resolved (null: no such station). */
function filtered(db: Knex, lotId: number, q: UnitQuery, stationId: number | null | undefined) {
  const t = db('units as u').where('u.lot_id', lotId)
  if (q.serial) {
    if (q.serialMatch === 'contains') t.whereRaw("u.serial LIKE ? ESCAPE '\\\\'", [`%${likeEscape(q.serial)}%`])
    else t.whereRaw("u.serial LIKE ? ESCAPE '\\\\'", [`${likeEscape(q.serial)}%`])
  }
  if (q.verdicts?.length) t.whereIn('u.state', q.verdicts)
  if (q.minAttempts) t.where('u.max_attempts', '>=', q.minAttempts)
  if (stationId !== undefined) t.where('u.last_station_id', stationId ?? 0)
  if (q.from) t.where('u.last_tested_at', '>=', q.from)
  if (q.to) t.where('u.last_tested_at', '<', q.to)
  return t
}

/** Rows after (in the list's order) the cursor: col > v OR (col = v AND serial > s), NULLs first as the index holds them. */
function afterCursor(t: Knex.QueryBuilder, col: string, dir: 'asc' | 'desc', c: UnitCursor) {
  const gt = dir === 'asc' ? '>' : '<'
  if (col === 'serial') return t.where('u.serial', gt, c.s)
  const k = `u.${col}`
  return t.where((w) => {
    if (c.v === null) {
      w.where((x) => x.whereNull(k).where('u.serial', gt, c.s))
      if (dir === 'asc') w.orWhereNotNull(k)
    } else {
      w.where(k, gt, c.v).orWhere((x) => x.where(k, c.v).where('u.serial', gt, c.s))
      if (dir === 'desc') w.orWhereNull(k)
    }
  })
}

function ordered(t: Knex.QueryBuilder, col: string, dir: 'asc' | 'desc', q: UnitQuery) {
  // one verdict by verdict: the state is fixed, and ordering by it too makes the planner sort
  if (col !== 'serial' && !(col === 'state' && q.verdicts?.length === 1)) t.orderBy(`u.${col}`, dir)
  return t.orderBy('u.serial', dir)
}

const flip = (d: 'asc' | 'desc') => (d === 'asc' ? 'desc' : 'asc')

function toRow(r: any, stations: Map<number, string>): UnitListRow {
  return {
    serial: r.serial, verdict: r.state ?? 'untested', firstPass: r.first_pass == null ? null : Number(r.first_pass) === 1, stepsTested: Number(r.steps_tested),
    lastStep: r.last_step ?? null, maxAttempts: Number(r.max_attempts), runs: Number(r.runs), station: r.last_station_id ? stations.get(Number(r.last_station_id)) ?? null : null,
    lastTestedAt: r.last_tested_at ?? null,
  }
}

export const cursorOf = (r: any, sort: UnitSort): UnitCursor => {
  const v = r[SORT_COLUMN[sort]]
  return { v: v ?? null, s: r.serial }
}

/** A cursor as the list hands it out: base64url of [sort value, serial]. */
export function encodeUnitCursor(c: UnitCursor): string {
  return Buffer.from(JSON.stringify([c.v instanceof Date ? c.v.toISOString() : c.v, c.s])).toString('base64url')
}

export function decodeUnitCursor(text: string, sort: UnitSort): UnitCursor | undefined {
  try {
    const x = JSON.parse(Buffer.from(text, 'base64url').toString('utf8'))
    if (!Array.isArray(x) || x.length !== 2 || typeof x[1] !== 'string' || x[1].length > 64) return undefined
    const [v, s] = x as [unknown, string]
    if (v === null) return { v, s }
    if (sort === 'attempts' || sort === 'runs' || sort === 'station') return Number.isSafeInteger(v) && (v as number) >= 0 ? { v: v as number, s } : undefined
    if (sort === 'date') { const d = typeof v === 'string' ? new Date(v) : null; return d && !Number.isNaN(d.getTime()) ? { v: d, s } : undefined }
    if (sort === 'verdict') return UNIT_VERDICTS.includes(v as UnitVerdict) ? { v: v as string, s } : undefined
    return typeof v === 'string' && v.length <= 64 ? { v, s } : undefined
  } catch {
    return undefined
  }
}

/** The lot's station names by id, and the station filter's name as an id (null: no such station; undefined: no filter). */
function stationLookup(q: UnitQuery, stations: { id: number; name: string }[]) {
  const stationId = q.station === undefined ? undefined : stations.find((s) => s.name === q.station)?.id ?? null
  return { names: new Map(stations.map((s) => [s.id, s.name])), stationId }
}

/**
 * A page `offset` rows into the list: the rows skipped are counted off the sort's index alone (it holds the serial and
 * the row's id), and only the page's own rows are read in full. Counting off the full rows cost one row read per row
 * skipped, which grew with the lot.
 */
function skipped(db: Knex, lotId: number, q: UnitQuery, stationId: number | null | undefined, dir: 'asc' | 'desc', offset: number, limit: number) {
  const col = SORT_COLUMN[q.sort]
  const ids = ordered(filtered(db, lotId, q, stationId).select('u.id'), col, dir, q).limit(limit).offset(offset)
  return ordered(db('units as u').join(ids.as('k'), 'k.id', 'u.id').select(LIST_COLUMNS), col, dir, q)
}

/** A count stops here when the counters cannot answer it: past it the list says "more than". */
export const COUNT_BOUND = 10_000

export type UnitsListing = { total: number; totalExact: boolean; rows: UnitListRow[]; next: UnitCursor | null }

/**
 * One page. The total comes from the lot's counters when only verdicts filter the list, otherwise from a count
 * bounded at COUNT_BOUND. Past the middle of a list of known length the page is read from the other end (the smaller
 * offset) and turned round; with `after` it starts past the cursor instead of counting rows off.
 */
export async function listLotUnits(db: Knex, lotId: number, q: UnitQuery, page: { limit: number; offset: number; after?: UnitCursor },
  counts: Record<Counter, number>, stations: { id: number; name: string }[]): Promise<UnitsListing> {
  const { names, stationId } = stationLookup(q, stations)
  let total: number
  let totalExact = true
  const onlyVerdicts = !q.serial && !q.minAttempts && q.station === undefined && !q.from && !q.to
  if (onlyVerdicts) {
    const by: Record<UnitVerdict, number> = { pass: counts.passed, fail: counts.failed, untested: counts.untested, incomplete: counts.in_progress - counts.untested }
    total = q.verdicts?.length ? [...new Set(q.verdicts)].reduce((n, v) => n + by[v], 0) : counts.units
  } else {
    const [r] = await db.from(filtered(db, lotId, q, stationId).select(db.raw('1')).limit(COUNT_BOUND + 1).as('x')).count({ n: '*' })
    total = Number((r as any).n)
    if (total > COUNT_BOUND) { total = COUNT_BOUND; totalExact = false }
  }
  const col = SORT_COLUMN[q.sort]
  let rows: any[]
  if (page.after) {
    const t = filtered(db, lotId, q, stationId).select(LIST_COLUMNS)
    rows = await ordered(afterCursor(t, col, q.dir, page.after), col, q.dir, q).limit(page.limit)
  } else if (totalExact && page.offset > total / 2) {
    // from the far end: the rows before total - offset, read backwards and turned round
    const end = total - page.offset
    if (end <= 0) rows = []
    else rows = (await skipped(db, lotId, q, stationId, flip(q.dir), Math.max(0, end - page.limit), Math.min(page.limit, end))).reverse()
  } else {
    rows = await skipped(db, lotId, q, stationId, q.dir, page.offset, page.limit)
  }
  const last = rows.at(-1)
  return { total, totalExact, rows: rows.map((r) => toRow(r, names)), next: last && rows.length === page.limit ? cursorOf(last, q.sort) : null }
}

/** Every row of the list in its order, `batch` at a time by keyset (for the CSV, written as it is read). */
export async function* eachLotUnit(db: Knex, lotId: number, q: UnitQuery, stations: { id: number; name: string }[], batch = 2000): AsyncGenerator<UnitListRow[]> {
  const { names, stationId } = stationLookup(q, stations)
  const col = SORT_COLUMN[q.sort]
  let after: UnitCursor | undefined
  for (;;) {
    const t = filtered(db, lotId, q, stationId).select(LIST_COLUMNS)
    const rows = await ordered(after ? afterCursor(t, col, q.dir, after) : t, col, q.dir, q).limit(batch)
    if (rows.length) yield rows.map((r: any) => toRow(r, names))
    if (rows.length < batch) return
    after = cursorOf(rows.at(-1), q.sort)
  }
}
