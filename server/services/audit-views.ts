import type { Knex } from 'knex'
import type { FieldError } from '../utils/problem'
import { auditFacets, listAudit, type AuditFilter } from '../database/repositories/audit-log'
import { RuleError } from './rule-error'

function one(v: unknown): string | undefined {
  const s = Array.isArray(v) ? v[0] : v
  return s == null || s === '' ? undefined : String(s)
}

/** ?entity, entityId, action, user (id), from, to, page, pageSize; 400 with pointers into /query. */
export async function auditPage(db: Knex, raw: Record<string, unknown>) {
  const errors: FieldError[] = []
  const int = (name: string, dflt: number, max: number) => {
    const s = one(raw[name])
    if (s === undefined) return dflt
    if (!/^\d+$/.test(s) || Number(s) < 1 || Number(s) > max) { errors.push({ pointer: `/query/${name}`, message: `must be a whole number from 1 to ${max}` }); return dflt }
    return Number(s)
  }
  const date = (name: string) => {
    const s = one(raw[name])
    if (s === undefined) return undefined
    const d = new Date(s)
    if (Number.isNaN(d.getTime())) { errors.push({ pointer: `/query/${name}`, message: 'must be a date or date-time (ISO 8601)' }); return undefined }
    return d
  }
  const page = int('page', 1, 1_000_000)
  const pageSize = int('pageSize', 50, 200)
  const filter: AuditFilter = {
    entity: one(raw.entity), entityId: one(raw.entityId), action: one(raw.action),
    userId: one(raw.user) === undefined ? undefined : int('user', 0, 2 ** 31), from: date('from'), to: date('to'),
  }
  if (errors.length) throw new RuleError(400, 'Some query parameters are not valid.', errors)
  const { total, rows } = await listAudit(db, filter, { limit: pageSize, offset: (page - 1) * pageSize })
  return { page, pageSize, total, pageCount: Math.max(1, Math.ceil(total / pageSize)), entries: rows, facets: await auditFacets(db) }
}
