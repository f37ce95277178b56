// The query naming one parameter of one part (?part=&name=&qualifier=&step=) and the view-specific extras of the
// trends, station-comparison and phase-noise routes. Read by the handlers; the services take the parsed values.
import { CUSTOM_NAME_PATTERN, qualifierKind } from '../../shared/utils/measurement-names'
import type { SeriesQuery } from '../services/analytics/series-query'
import type { FieldError } from '../../shared/types/problem'
import { problem } from './problem'

const STEP_PATTERN = /^[a-z][a-z0-9-]{0,23}$/

function text(v: unknown): string | undefined {
  return typeof v === 'string' && v !== '' ? v : undefined
}

/** Parses part/name/qualifier/step; errors (with any the caller collected before) are one 400 problem. */
export function parseSeriesQuery(query: Record<string, unknown>, errors: FieldError[] = []): SeriesQuery {
  const part = text(query.part)
  const name = text(query.name)
  const step = text(query.step) ?? null
  if (!part) errors.push({ pointer: '/part', message: 'a part number is required' })
  if (!name || !CUSTOM_NAME_PATTERN.test(name)) errors.push({ pointer: '/name', message: 'a measurement name is required' })
  if (step !== null && !STEP_PATTERN.test(step)) errors.push({ pointer: '/step', message: 'not a step name' })
  const rawQ = text(query.qualifier)
  const qualifier = rawQ === undefined ? 0 : Number(rawQ)
  if (!Number.isFinite(qualifier) || qualifier < 0) errors.push({ pointer: '/qualifier', message: 'must be a number ≥ 0' })
  else if (name && rawQ === undefined && qualifierKind(name) !== null) errors.push({ pointer: '/qualifier', message: `${name} needs a qualifier (offset in Hz or harmonic number)` })
  if (errors.length) throw problem(400, 'The parameter query is not valid.', { errors })
  return { part: part!, name: name!, qualifier, step }
}

/** An ISO date or date-time query value; undefined when absent. */
function parseInstant(query: Record<string, unknown>, key: string, errors: FieldError[]): Date | undefined {
  const v = text(query[key])
  if (v === undefined) return undefined
  const d = new Date(v)
  if (!/^\d{4}-\d{2}-\d{2}/.test(v) || Number.isNaN(d.getTime())) { errors.push({ pointer: `/${key}`, message: 'must be an ISO 8601 date or date-time' }); return undefined }
  return d
}

/**
 * Whether a cross-lot view takes engineering and trial lots in: `engineering=include` does, absent or
 * `engineering=exclude` leaves them out.
 */
function parseEngineeringScope(query: Record<string, unknown>, errors: FieldError[]): boolean {
  const v = text(query.engineering)
  if (v === undefined || v === 'exclude') return false
  if (v === 'include') return true
  errors.push({ pointer: '/engineering', message: 'must be include or exclude' })
  return false
}

/** A bare date as `to` means the whole of that day. */
function endOfDayIfDate(raw: unknown, d: Date | undefined): Date | undefined {
  return d && typeof raw === 'string' && /^\d{4}-\d{2}-\d{2}$/.test(raw) ? new Date(d.getTime() + 86_400_000 - 1) : d
}

/** /api/trends: the series, an optional window of lots by their run times, and whether engineering lots are in. */
export function parseTrendsQuery(query: Record<string, unknown>): { series: SeriesQuery; from?: Date; to?: Date; includeEngineering: boolean } {
  const errors: FieldError[] = []
  const from = parseInstant(query, 'from', errors)
  const to = endOfDayIfDate(query.to, parseInstant(query, 'to', errors))
  const includeEngineering = parseEngineeringScope(query, errors)
  return { series: parseSeriesQuery(query, errors), from, to, includeEngineering }
}

/** /api/stations/compare: the series, optionally one lot of its part, and whether engineering lots are in. */
export function parseStationCompareQuery(query: Record<string, unknown>): { series: SeriesQuery; lotCode: string | null; includeEngineering: boolean } {
  const errors: FieldError[] = []
  const lotCode = typeof query.lot === 'string' && query.lot !== '' ? query.lot : null
  if (lotCode !== null && lotCode.length > 32) errors.push({ pointer: '/lot', message: 'not a lot code' })
  const includeEngineering = parseEngineeringScope(query, errors)
  return { series: parseSeriesQuery(query, errors), lotCode, includeEngineering }
}

/** /api/lots/:code/phase-noise: the step (default final) and the revision asked for, if any. */
export function parsePhaseNoiseQuery(query: Record<string, unknown>): { step: string; revision: number | null } {
  const step = typeof query.step === 'string' && query.step !== '' ? query.step : 'final'
  if (!STEP_PATTERN.test(step)) throw problem(400, 'The step is not valid.', { errors: [{ pointer: '/step', message: 'not a step name' }] })
  const raw = query.revision
  if (raw === undefined || raw === '') return { step, revision: null }
  const n = Number(raw)
  if (!Number.isInteger(n) || n < 1) throw problem(400, 'The revision is not valid.', { errors: [{ pointer: '/revision', message: 'must be a revision number (1, 2, …)' }] })
  return { step, revision: n }
}
