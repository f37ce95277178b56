// Phase noise of a lot by offset (percentile band against the mask) and the spread of integrated jitter.
import type { Knex } from 'knex'
import { histogram, quantileSorted } from '../../../shared/utils/percentiles'
import { firstAttemptValues, lotRef, qualifiersOf } from '../../database/repositories/analytics-params'
import { listEffectiveRevisions, revisionAt } from '../../database/repositories/spec-lookup'
import { problem } from '../../utils/problem'
import { freshenLotStats } from '../ingest/fold-param-stats'

/** Most recent first attempts read per offset; beyond this the view says it is a sample. */
export const VALUES_PER_OFFSET_CAP = 20_000

export function jitterBins(n: number): number {
  return Math.min(40, Math.max(5, Math.ceil(Math.log2(Math.max(n, 1)) + 1)))
}

export function bandOf(values: number[]) {
  const sorted = [...values].sort((a, b) => a - b)
  if (!sorted.length) return { n: 0, median: null, p10: null, p90: null, min: null, max: null }
  return {
    n: sorted.length, median: quantileSorted(sorted, 0.5), p10: quantileSorted(sorted, 0.1), p90: quantileSorted(sorted, 0.9),
    min: sorted[0]!, max: sorted[sorted.length - 1]!,
  }
}

export async function lotPhaseNoise(db: Knex, code: string, query: Record<string, unknown>, now = new Date()) {
  const step = typeof query.step === 'string' && query.step !== '' ? query.step : 'final'
  if (!/^[a-z][a-z0-9-]{0,23}$/.test(step)) throw problem(400, 'The step is not valid.', { errors: [{ pointer: '/step', message: 'not a step name' }] })
  const lot = await lotRef(db, code)
  if (!lot) throw problem(404, `No lot ${code}.`)
  if (!lot.steps.includes(step)) throw problem(400, `${lot.partNumber} has no step ${step}.`, { errors: [{ pointer: '/step', message: `one of ${lot.steps.join(', ')}` }] })
  const revision = revisionAt(await listEffectiveRevisions(db, lot.productId), now)
  const limits = (revision?.limits ?? []).filter((l) => l.step === step)
  const mask = limits.filter((l) => l.name === 'phase_noise')
  await freshenLotStats(db, [lot.id])
  const offsets = [...new Set([...(await qualifiersOf(db, lot.id, step, 'phase_noise')), ...mask.map((l) => l.qualifier)])].sort((a, b) => a - b)

  let truncated = false
  const read = async (name: string, qualifier: number) => {
    const values = await firstAttemptValues(db, lot.id, { step, name, qualifier }, VALUES_PER_OFFSET_CAP + 1)
    if (values.length > VALUES_PER_OFFSET_CAP) { truncated = true; values.length = VALUES_PER_OFFSET_CAP }
    return values
  }
  const bands = await Promise.all(offsets.map(async (offsetHz) => {
    const limit = mask.find((l) => l.qualifier === offsetHz)
    return { offsetHz, ...bandOf(await read('phase_noise', offsetHz)), usl: limit?.usl ?? null, lsl: limit?.lsl ?? null }
  }))

  const jitterValues = await read('integrated_jitter', 0)
  const jitterLimit = limits.find((l) => l.name === 'integrated_jitter')
  const jb = bandOf(jitterValues)
  const h = jitterValues.length ? histogram(jitterValues, { bins: jitterBins(jitterValues.length) }) : null
  return {
    lot: { code: lot.code, partNumber: lot.partNumber, productName: lot.productName, status: lot.status, steps: lot.steps },
    step,
    revision: revision?.revision ?? null,
    population: 'first' as const,
    cap: VALUES_PER_OFFSET_CAP,
    truncated,
    offsets: bands,
    jitter: jb.n === 0 ? null : {
      unit: 's', n: jb.n, usl: jitterLimit?.usl ?? null,
      mean: jitterValues.reduce((s, x) => s + x, 0) / jb.n,
      percentiles: { p10: jb.p10, p50: jb.median, p90: jb.p90 }, min: jb.min, max: jb.max,
      histogram: { edges: h!.edges, counts: h!.counts },
    },
  }
}
