import type { Knex } from 'knex'
import type { FieldError } from '../utils/problem'
import { findLotByCode, lotCounts, runsReceivedSince, unitStepsOfLot } from '../database/repositories/lot-detail'
import { findProductById } from '../database/repositories/products'
import { listLotUnits, lotStationNames, UNIT_SORTS, UNIT_VERDICTS, type UnitQuery, type UnitSort, type UnitVerdict } from '../database/repositories/lot-units'
import type { LotUnitsPage, LotView } from '../../shared/types/lot'
import { lotReadiness } from './lot-readiness'
import { RuleError } from './rule-error'
import { lotShipping } from './shipments/lot-shipping'

export const MAX_PAGE_SIZE = 200
export const MAX_CSV_ROWS = 50_000

const iso = (d: Date) => new Date(d).toISOString()
const isoOrNull = (d: Date | null) => (d ? iso(d) : null)

export async function lotDetail(db: Knex, code: string): Promise<LotView | undefined> {
  const lot = await findLotByCode(db, code)
  if (!lot) return undefined
  const product = (await findProductById(db, lot.productId))!
  const counts = await lotCounts(db, lot.id, product.steps.at(-1))
  // a release judged the units as they stood; runs that came in afterwards are for quality to review
  const runsSinceRelease = lot.releasedAt ? await runsReceivedSince(db, lot.id, lot.releasedAt) : null
  // before a release, how many units the release check would hold back
  const readiness = lot.status === 'open' || lot.status === 'on_hold' ? lotReadiness(await unitStepsOfLot(db, lot.id), product.steps) : null
  // a lot ships with its units' shipments: of its passing units, how many have left in a dispatched shipment
  const shipping = await lotShipping(db, lot.id, product.steps)
  const { id: _id, productId: _p, ...rest } = lot
  return {
    ...rest,
    createdAt: iso(lot.createdAt), releasedAt: isoOrNull(lot.releasedAt), shippedAt: isoOrNull(lot.shippedAt),
    runsSinceRelease,
    shipping,
    readiness: readiness ? { units: readiness.units, notReady: readiness.notReady.length } : null,
    product: { partNumber: product.partNumber, name: product.name, steps: product.steps },
    counts: { planned: lot.plannedQty, ...counts, firstRunAt: isoOrNull(counts.firstRunAt), lastRunAt: isoOrNull(counts.lastRunAt) },
  }
}

type RawQuery = Record<string, unknown>

function one(v: unknown): string | undefined {
  const s = Array.isArray(v) ? v[0] : v
  return s == null || s === '' ? undefined : String(s)
}

/** Reads the unit list's paging, sorting and filters from the query string; 400 with pointers into /query. */
export function parseUnitQuery(raw: RawQuery): { query: UnitQuery; page: number; pageSize: number } {
  const errors: FieldError[] = []
  const bad = (name: string, message: string) => errors.push({ pointer: `/query/${name}`, message })
  const int = (name: string, dflt: number, min: number, max: number) => {
    const s = one(raw[name])
    if (s === undefined) return dflt
    const n = Number(s)
    if (!/^\d+$/.test(s) || n < min || n > max) { bad(name, `must be a whole number from ${min} to ${max}`); return dflt }
    return n
  }
  const date = (name: string) => {
    const s = one(raw[name])
    if (s === undefined) return undefined
    const d = new Date(s)
    if (Number.isNaN(d.getTime())) { bad(name, 'must be a date or date-time (ISO 8601)'); return undefined }
    return d
  }
  const page = int('page', 1, 1, 1_000_000)
  const pageSize = int('pageSize', 50, 1, MAX_PAGE_SIZE)
  const sort = (one(raw.sort) ?? 'serial') as UnitSort
  if (!UNIT_SORTS.includes(sort)) bad('sort', `must be one of ${UNIT_SORTS.join(', ')}`)
  const dir = one(raw.dir) ?? 'asc'
  if (dir !== 'asc' && dir !== 'desc') bad('dir', 'must be asc or desc')
  const verdicts = (one(raw.verdict)?.split(',').map((v) => v.trim()).filter(Boolean) ?? []) as UnitVerdict[]
  for (const v of verdicts) if (!UNIT_VERDICTS.includes(v)) bad('verdict', `must be among ${UNIT_VERDICTS.join(', ')}`)
  const serial = one(raw.serial)
  if (serial && serial.length > 64) bad('serial', 'must be at most 64 characters')
  const query: UnitQuery = {
    serial, verdicts, minAttempts: int('minAttempts', 0, 1, 1000) || undefined, station: one(raw.station),
    from: date('from'), to: date('to'), sort, dir: dir as 'asc' | 'desc',
  }
  if (errors.length) throw new RuleError(400, 'Some query parameters are not valid.', errors)
  return { query, page, pageSize }
}

export async function lotUnitsPage(db: Knex, code: string, raw: RawQuery): Promise<LotUnitsPage> {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const { query, page, pageSize } = parseUnitQuery(raw)
  const product = (await findProductById(db, lot.productId))!
  const { total, rows } = await listLotUnits(db, lot.id, product.steps.at(-1) ?? '', query, { limit: pageSize, offset: (page - 1) * pageSize })
  const units = rows.map((r) => ({ ...r, lastTestedAt: isoOrNull(r.lastTestedAt) }))
  return { lot: lot.code, page, pageSize, total, pageCount: Math.max(1, Math.ceil(total / pageSize)), sort: query.sort, dir: query.dir, units, stations: await lotStationNames(db, lot.id) }
}

export async function lotUnitsForCsv(db: Knex, code: string, raw: RawQuery) {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const { query } = parseUnitQuery({ ...raw, page: undefined, pageSize: undefined })
  const product = (await findProductById(db, lot.productId))!
  return listLotUnits(db, lot.id, product.steps.at(-1) ?? '', query, { limit: MAX_CSV_ROWS, offset: 0 })
}
