import type { Knex } from 'knex'
import { findLotByCode, lotCounts, runsReceivedSince, unitStepsOfLot } from '../database/repositories/lot-detail'
import { findProductById } from '../database/repositories/products'
import { listLotUnits, lotStationNames, type UnitQuery } from '../database/repositories/lot-units'
import type { LotUnitsPage, LotView } from '../../shared/types/lot'
import { lotReadiness } from './lot-readiness'
import { RuleError } from './rule-error'
import { lotShipping } from './shipments/lot-shipping'

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

/** One page of the lot's units under the filters and order parsed by server/utils/unit-query.ts. */
export async function lotUnitsPage(db: Knex, code: string, { query, page, pageSize }: { query: UnitQuery; page: number; pageSize: number }): Promise<LotUnitsPage> {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const product = (await findProductById(db, lot.productId))!
  const { total, rows } = await listLotUnits(db, lot.id, product.steps.at(-1) ?? '', query, { limit: pageSize, offset: (page - 1) * pageSize })
  const units = rows.map((r) => ({ ...r, lastTestedAt: isoOrNull(r.lastTestedAt) }))
  return { lot: lot.code, page, pageSize, total, pageCount: Math.max(1, Math.ceil(total / pageSize)), sort: query.sort, dir: query.dir, units, stations: await lotStationNames(db, lot.id) }
}

export async function lotUnitsForCsv(db: Knex, code: string, query: UnitQuery) {
  const lot = await findLotByCode(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  const product = (await findProductById(db, lot.productId))!
  return listLotUnits(db, lot.id, product.steps.at(-1) ?? '', query, { limit: MAX_CSV_ROWS, offset: 0 })
}
