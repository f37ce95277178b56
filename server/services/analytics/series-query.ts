// One parameter of one part (parsed from ?part=&name=&qualifier=&step= by server/utils/series-query.ts), resolved against the part.
import type { Knex } from 'knex'
import { KNOWN_MEASUREMENTS } from '../../../shared/utils/measurement-names'
import { limitInForce } from '../../../shared/utils/phase-noise-mask'
import { parameterLabel } from '../../../shared/utils/value-format'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type SpecLimit } from '../../database/repositories/spec-lookup'
import { RuleError } from '../rule-error'
import type { SeriesParameter } from '../../../shared/types/capability'
import { qualifierFields } from '../ingest/run-view'

export type SeriesQuery = { part: string; name: string; qualifier: number; step: string | null }

export type ResolvedSeries = {
  product: ProductInfo
  step: string
  limit: SpecLimit | undefined
  parameter: SeriesParameter
}

/**
 * The product, the step (default: the last step of the product) and the limit of the revision in force now, for
 * display; figures judged by other revisions take their own limits (see revision-limits.ts).
 */
export async function resolveSeries(db: Knex, q: SeriesQuery, now = new Date()): Promise<ResolvedSeries> {
  const product = await findProductByPart(db, q.part)
  if (!product) throw new RuleError(404, `Unknown part number ${q.part}.`)
  const step = q.step ?? product.steps[product.steps.length - 1] ?? 'final'
  if (!product.steps.includes(step)) throw new RuleError(400, `${product.partNumber} has no step ${step}.`, [{ pointer: '/step', message: `one of ${product.steps.join(', ')}` }])
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
