import type { Knex } from 'knex'
import { searchShippedUnits, type Scope } from '../../database/repositories/portal'
import { RuleError } from '../rule-error'
import type { PortalUnitSearch } from '../../../shared/types/portal'

const PREFIX = /^[A-Za-z0-9._-]{0,64}$/
const MAX_PAGE_SIZE = 100

function positive(raw: unknown, name: string, fallback: number, max: number): number {
  if (raw === undefined || raw === '') return fallback
  const n = Number(raw)
  if (typeof raw !== 'string' || !/^\d{1,6}$/.test(raw) || n < 1 || n > max) {
    throw new RuleError(400, `${name} must be a whole number from 1 to ${max}.`, [{ pointer: `/${name}`, message: `must be 1 to ${max}` }])
  }
  return n
}

/** Shipped serials starting with `q` (every shipped serial when empty), in the caller's scope, a page at a time. */
export async function searchPortalUnits(db: Knex, scope: Scope, query: Record<string, unknown>): Promise<PortalUnitSearch> {
  const q = typeof query.q === 'string' ? query.q.trim() : query.q === undefined ? '' : null
  if (q === null || !PREFIX.test(q)) {
    throw new RuleError(400, 'q is the start of a serial: up to 64 letters, digits, dots, dashes or underscores.', [{ pointer: '/q', message: 'must be up to 64 of A-Z a-z 0-9 . _ -' }])
  }
  const page = positive(query.page, 'page', 1, 100_000)
  const pageSize = positive(query.pageSize, 'pageSize', 25, MAX_PAGE_SIZE)
  const { rows, total } = await searchShippedUnits(db, scope, q, pageSize, (page - 1) * pageSize)
  return {
    q, total, page, pageSize,
    units: rows.map((r) => ({
      partNumber: r.partNumber, productName: r.productName, serial: r.serial, lot: r.lot,
      shipment: { id: r.shipmentId, code: r.shipmentCode, customer: r.customer }, returned: r.returned,
    })),
  }
}
