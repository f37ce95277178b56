import { decodeUnitCursor, UNIT_SORTS, UNIT_VERDICTS, type UnitCursor, type UnitQuery, type UnitSort, type UnitVerdict } from '../database/repositories/lot-units'
import type { FieldError } from '../../shared/types/problem'
import { problem } from './problem'
import { firstValue as one } from './query-values'

export const UNITS_PAGE_MAX = 200

/** Reads the unit list's paging, sorting and filters from the query string; 400 with pointers into /query. */
export function parseUnitQuery(raw: Record<string, unknown>): { query: UnitQuery; page: number; pageSize: number; after?: UnitCursor } {
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
  const pageSize = int('pageSize', 50, 1, UNITS_PAGE_MAX)
  const sort = (one(raw.sort) ?? 'serial') as UnitSort
  if (!UNIT_SORTS.includes(sort)) bad('sort', `must be one of ${UNIT_SORTS.join(', ')}`)
  const dir = one(raw.dir) ?? 'asc'
  if (dir !== 'asc' && dir !== 'desc') bad('dir', 'must be asc or desc')
  const verdicts = (one(raw.verdict)?.split(',').map((v) => v.trim()).filter(Boolean) ?? []) as UnitVerdict[]
  for (const v of verdicts) if (!UNIT_VERDICTS.includes(v)) bad('verdict', `must be among ${UNIT_VERDICTS.join(', ')}`)
  const serial = one(raw.serial)
  if (serial && serial.length > 64) bad('serial', 'must be at most 64 characters')
  const serialMatch = one(raw.serialMatch) ?? 'prefix'
  if (serialMatch !== 'prefix' && serialMatch !== 'contains') bad('serialMatch', 'must be prefix or contains')
  const afterText = one(raw.after)
  const after = afterText === undefined || !UNIT_SORTS.includes(sort) ? undefined : decodeUnitCursor(afterText, sort)
  if (afterText !== undefined && !after) bad('after', 'must be a cursor the list handed out, for the same sort')
  const query: UnitQuery = {
    serial, serialMatch: serialMatch as 'prefix' | 'contains', verdicts, minAttempts: int('minAttempts', 0, 1, 1000) || undefined, station: one(raw.station),
    from: date('from'), to: date('to'), sort, dir: dir as 'asc' | 'desc',
  }
  if (errors.length) throw problem(400, 'Some query parameters are not valid.', { errors })
  return { query, page, pageSize, after }
}

