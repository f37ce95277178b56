// Phase noise of a lot by offset (percentile band against the mask) and the spread of integrated jitter.
import type { Knex } from 'knex'
import { histogram, quantileSorted } from '../../../shared/utils/percentiles'
import { firstAttemptValues, lotRef, sampleCounts, type SampleCount } from '../../database/repositories/analytics-params'
import { listEffectiveRevisions, revisionAt } from '../../database/repositories/spec-lookup'
import type { PhaseNoiseView, RevisionCount } from '../../../shared/types/capability'
import { RuleError } from '../rule-error'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { bookOf } from './revision-limits'

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

/** Revisions with phase-noise or jitter values at the step, oldest first; n is the count at the most-measured offset. */
function revisionsPresent(counts: SampleCount[], judged: (ids: number[]) => { revisionId: number; revision: number | null; approvedAt: string | null }[]): RevisionCount[] {
  const most = new Map<number, number>()
  for (const c of counts) if (c.n > 0) most.set(c.revisionId, Math.max(most.get(c.revisionId) ?? 0, c.n))
  return judged([...most.keys()]).map((r) => ({ revisionId: r.revisionId, revision: r.revision, approvedAt: r.approvedAt, n: most.get(r.revisionId)! }))
}

/**
 * Percentiles of L(f) per offset and the spread of integrated jitter, over the first attempts judged by one revision
 * (asked for, or the latest present) and against that revision's mask: values judged by other masks are not mixed in.
 */
export async function lotPhaseNoise(db: Knex, code: string, { step, revision: asked }: { step: string; revision: number | null }, now = new Date()): Promise<PhaseNoiseView> {
  const lot = await lotRef(db, code)
  if (!lot) throw new RuleError(404, `No lot ${code}.`)
  if (!lot.steps.includes(step)) throw new RuleError(400, `${lot.partNumber} has no step ${step}.`, [{ pointer: '/step', message: `one of ${lot.steps.join(', ')}` }])
  const effective = await listEffectiveRevisions(db, lot.productId)
  const book = bookOf(effective)
  await freshenLotStats(db, [lot.id])
  const counts = await sampleCounts(db, lot.id, step, ['phase_noise', 'integrated_jitter'])
  const revisions = revisionsPresent(counts, (ids) => book.judged(ids))
  let revisionId: number
  if (asked !== null) {
    const id = book.idOf(asked)
    if (id === undefined) throw new RuleError(400, `${lot.partNumber} has no approved revision ${asked}.`, [{ pointer: '/revision', message: 'not an approved revision of this part' }])
    revisionId = id
  } else {
    // without values yet, the mask in force now is drawn with empty bands
    revisionId = revisions[revisions.length - 1]?.revisionId ?? revisionAt(effective, now)?.id ?? 0
  }
  const limits = (effective.find((r) => r.id === revisionId)?.limits ?? []).filter((l) => l.step === step)
  const mask = limits.filter((l) => l.name === 'phase_noise')
  const measured = counts.filter((c) => c.revisionId === revisionId && c.name === 'phase_noise' && c.n > 0).map((c) => c.qualifier)
  const offsets = [...new Set([...measured, ...mask.map((l) => l.qualifier)])].sort((a, b) => a - b)

  let truncated = false
  const read = async (name: string, qualifier: number) => {
    const values = await firstAttemptValues(db, lot.id, { step, name, qualifier, revisionId }, VALUES_PER_OFFSET_CAP + 1)
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
    ...book.tag(revisionId),
    revisions,
    population: 'first' as const,
    cap: VALUES_PER_OFFSET_CAP,
    truncated,
    offsets: bands,
    jitter: jb.n === 0 ? null : {
      unit: 's' as const, n: jb.n, usl: jitterLimit?.usl ?? null,
      mean: jitterValues.reduce((s, x) => s + x, 0) / jb.n,
      percentiles: { p10: jb.p10!, p50: jb.median!, p90: jb.p90! }, min: jb.min!, max: jb.max!,
      histogram: { edges: h!.edges, counts: h!.counts },
    },
  }
}
