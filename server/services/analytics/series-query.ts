// The query naming one parameter of one part: ?part=&name=&qualifier=&step= (plus view-specific extras).
import type { Knex } from 'knex'
import { CUSTOM_NAME_PATTERN, KNOWN_MEASUREMENTS, qualifierKind } from '../../../shared/utils/measurement-names'
import { limitInForce } from '../../../shared/utils/phase-noise-mask'
import { parameterLabel } from '../../../shared/utils/value-format'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type SpecLimit } from '../../database/repositories/spec-lookup'
import { problem, type FieldError } from '../../utils/problem'
import { qualifierFields } from '../ingest/run-view'

export type SeriesQuery = { part: string; name: string; qualifier: number; step: string | null }

const STEP_PATTERN = /^[a-z][a-z0-9-]{0,23}$/

function text(v: unknown): string | undefined {
  return typeof v === 'string' && v !== '' ? v : undefined
}

/** Parses part/name/qualifier/step; errors are collected into one 400 problem. */
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


export type ResolvedSeries = {
  product: ProductInfo
  step: string
  limit: SpecLimit | undefined
  parameter: { step: string; name: string; qualifier: number; offsetHz?: number; harmonic?: number; label: string; unit: string | null; lsl: number | null; usl: number | null; target: number | null; revision: number | null; approvedAt: string | null }
}

/**
 * The product, the step (default: the last step of the product) and the limit of the revision in force now, for
 * display; figures judged by other revisions take their own limits (see revision-limits.ts).
 */
export async function resolveSeries(db: Knex, q: SeriesQuery, now = new Date()): Promise<ResolvedSeries> {
  const product = await findProductByPart(db, q.part)
  if (!product) throw problem(404, `Unknown part number ${q.part}.`)
  const step = q.step ?? product.steps[product.steps.length - 1] ?? 'final'
  if (!product.steps.includes(step)) throw problem(400, `${product.partNumber} has no step ${step}.`, { errors: [{ pointer: '/step', message: `one of ${product.steps.join(', ')}` }] })
  const inForce = revisionAt(await listEffectiveRevisions(db, product.id), now)
  const limit = limitInForce(inForce?.limits ?? [], { step, name: q.name, qualifier: q.qualifier })
  const known = (KNOWN_MEASUREMENTS as Record<string, { unit: string }>)[q.name]
  return {
    product, step, limit,
    parameter: {
      step, name: q.name, qualifier: q.qualifier, ...qualifierFields(q.name, q.qualifier), label: parameterLabel(q.name, q.qualifier),
      unit: limit?.unit ?? known?.unit ?? null, lsl: limit?.lsl ?? null, usl: limit?.usl ?? null, target: limit?.target ?? null,
      revision: inForce?.revision ?? null, approvedAt: inForce?.approvedAt?.toISOString() ?? null,
    },
  }
}

/** An ISO date or date-time query value; undefined when absent. */
export function parseInstant(query: Record<string, unknown>, key: string, errors: FieldError[]): Date | undefined {
  const v = text(query[key])
  if (v === undefined) return undefined
  const d = new Date(v)
  if (!/^\d{4}-\d{2}-\d{2}/.test(v) || Number.isNaN(d.getTime())) { errors.push({ pointer: `/${key}`, message: 'must be an ISO 8601 date or date-time' }); return undefined }
  return d
}
