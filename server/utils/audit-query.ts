import type { AuditFilter } from '../database/repositories/audit-log'
import type { FieldError } from '../../shared/types/problem'
import { problem } from './problem'
import { firstValue as one } from './query-values'

export type AuditQuery = { filter: AuditFilter; page: number; pageSize: number }

/** ?entity, entityId, action, user (id), from, to, page, pageSize; every fault at once, 400 with pointers into /query. */
export function parseAuditQuery(raw: Record<string, unknown>): AuditQuery {
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
  if (errors.length) throw problem(400, 'Some query parameters are not valid.', { errors })
  return { filter, page, pageSize }
}
