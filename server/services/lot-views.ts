import type { Knex } from 'knex'
import { findLotByCode, runsReceivedSince } from '../database/repositories/lot-detail'
import { lotStationsOf, lotUnitCounts } from '../database/repositories/unit-standing'
import { findProductById } from '../database/repositories/products'
import { eachLotUnit, encodeUnitCursor, listLotUnits, type UnitCursor, type UnitListRow, type UnitQuery } from '../database/repositories/lot-units'
import { csvLine } from '../../shared/utils/csv'
import type { LotUnitsPage, LotView } from '../../shared/types/lot'
import { RuleError } from './rule-error'
import { lotShipping } from './shipments/lot-shipping'

const iso = (d: Date) => new Date(d).toISOString()
const isoOrNull = (d: Date | null) => (d ? iso(d) : null)

export async function lotDetail(db: Knex, code: string): Promise<LotView | undefined> {
  const lot = await findLotByCode(db, code)
  if (!lot) return undefined
  const product = (await findProductById(db, lot.productId))!
  // the lot's counters, kept by the write path from each unit's standing (repositories/unit-standing.ts)
  const c = await lotUnitCounts(db, lot.id)
  const counts = { units: c.units, completed: c.completed, passed: c.passed, failed: c.failed, inProgress: c.in_progress, retested: c.retested, firstRunAt: c.firstRunAt, lastRunAt: c.lastRunAt }
  // a release judged the units as they stood; runs that came in afterwards are for quality to review
  const runsSinceRelease = lot.releasedAt ? await runsReceivedSince(db, lot.id, lot.releasedAt) : null
  // before a release, how many units the release check would hold back
  const readiness = lot.status === 'open' || lot.status === 'on_hold' ? { units: c.units, notReady: c.not_ready } : null
  // a lot ships with its units' shipments: of its passing units, how many have left in a dispatched shipment
  const shipping = await lotShipping(db, lot.id, c.passed_all)
  const { id: _id, productId: _p, ...rest } = lot
  return {
    ...rest,
    createdAt: iso(lot.createdAt), releasedAt: isoOrNull(lot.releasedAt), shippedAt: isoOrNull(lot.shippedAt),
    runsSinceRelease,
    shipping,
    readiness,
    product: { partNumber: product.partNumber, name: product.name, steps: product.steps },
    counts: { planned: lot.plannedQty, ...counts, firstRunAt: isoOrNull(counts.firstRunAt), lastRunAt: isoOrNull(counts.lastRunAt) },
  }
}

/** One page of the lot's units under the filters and order parsed by server/utils/unit-query.ts. */
export async function lotUnitsPage(db: Knex, code: string, { query, page, pageSize, after }: { query: UnitQuery; page: number; pageSize: number; after?: UnitCursor }): Promise<LotUnitsPage> {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const [counts, stations] = await Promise.all([lotUnitCounts(db, lot.id), lotStationsOf(db, lot.id)])
  const { total, totalExact, rows, next } = await listLotUnits(db, lot.id, query, { limit: pageSize, offset: (page - 1) * pageSize, after }, counts, stations)
  const units = rows.map((r) => ({ ...r, lastTestedAt: isoOrNull(r.lastTestedAt) }))
  return {
    lot: lot.code, page, pageSize, total, totalExact, pageCount: Math.max(1, Math.ceil(total / pageSize)), sort: query.sort, dir: query.dir, units,
    next: next ? encodeUnitCursor(next) : null, stations: stations.map((s) => s.name),
  }
}

const CSV_HEADER = ['serial', 'verdict', 'first_pass', 'steps_tested', 'last_step', 'max_attempts', 'runs', 'station', 'last_tested_at']

/**
 * Every unit of the list as CSV lines, read a batch at a time by keyset over the sort's index. The lot is found and
 * the first batch read before this returns, so an unknown lot (404) or a database fault (503) is answered before
 * any byte is sent; the rest is read as the response is written.
 */
export async function lotUnitsCsv(db: Knex, code: string, query: UnitQuery, batch = 2000): Promise<{ filename: string; lines: AsyncGenerator<string> }> {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const batches = eachLotUnit(db, lot.id, query, await lotStationsOf(db, lot.id), batch)
  const first = await batches.next()
  const line = (u: UnitListRow) => csvLine([u.serial, u.verdict, u.firstPass == null ? '' : u.firstPass ? 'yes' : 'no', u.stepsTested, u.lastStep, u.maxAttempts, u.runs, u.station, u.lastTestedAt ? new Date(u.lastTestedAt).toISOString() : ''])
  async function* lines() {
    yield csvLine(CSV_HEADER) + '\r\n'
    if (first.done) return
    yield first.value.map(line).join('\r\n') + '\r\n'
    for await (const rows of batches) yield rows.map(line).join('\r\n') + '\r\n'
  }
  return { filename: `${code.replace(/[^A-Za-z0-9._-]/g, '_')}-units.csv`, lines: lines() }
}
