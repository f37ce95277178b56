// Phase noise of a lot by offset (percentile band against the mask) and the spread of integrated jitter, from the
// aggregates the fold keeps: counts, means and extremes from the statistics rows, percentiles and the jitter
// histogram from the fine bins (lot_param_bins), so the view reads a few thousand rows whatever the lot's size.
import type { Knex } from 'knex'
import { displayHistogram, quantileFromBins, type FineBin } from '../../../shared/utils/fine-bins'
import { lotRef, sampleCounts, type SampleCount } from '../../database/repositories/analytics-params'
import { keptBins, type KeptBins } from '../../database/repositories/param-bins'
import { sampleSummaries, type SampleSummary } from '../../database/repositories/lot-stats'
import { listEffectiveRevisions, revisionAt } from '../../database/repositories/spec-lookup'
import type { PhaseNoiseView, RevisionCount } from '../../../shared/types/capability'
import { RuleError } from '../rule-error'
import { freshenLotStats } from '../ingest/fold-param-stats'
import { bookOf } from './revision-limits'

export function jitterBins(n: number): number {
  return Math.min(40, Math.max(5, Math.ceil(Math.log2(Math.max(n, 1)) + 1)))
}

type Band = { n: number; median: number | null; p10: number | null; p90: number | null; min: number | null; max: number | null; resolution: number | null; fine: FineBin[]; exponent: number }

/** Exact n, min and max from the statistics rows; percentiles placed in the first-attempt fine bins. */
function bandOf(summary: SampleSummary | undefined, kept: KeptBins | undefined): Band {
  const fine = (kept?.bins ?? []).map((b) => ({ k: b.k, n: b.nFirst })).filter((b) => b.n > 0)
  if (!summary || !kept || !fine.length) return { n: 0, median: null, p10: null, p90: null, min: null, max: null, resolution: null, fine: [], exponent: 0 }
  const q = (p: number) => quantileFromBins(fine, kept.exponent, p, summary)
  return {
    n: summary.n, median: q(0.5), p10: q(0.1), p90: q(0.9), min: summary.min, max: summary.max,
    resolution: 2 ** kept.exponent, fine, exponent: kept.exponent,
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

  // one snapshot: the statistics rows and the bins of one fold, never of two
  const names = ['phase_noise', 'integrated_jitter']
  const [summaries, kept] = await db.transaction(async (trx) => Promise.all([
    sampleSummaries(trx, { lotId: lot.id, step, revisionId, names }),
    keptBins(trx, { lotId: lot.id, step, revisionId, names }),
  ]), { isolationLevel: 'repeatable read' })
  const find = <T extends { name: string; qualifier: number }>(xs: T[], name: string, qualifier: number) => xs.find((x) => x.name === name && x.qualifier === qualifier)
  const band = (name: string, qualifier: number) => bandOf(find(summaries, name, qualifier), find(kept, name, qualifier))
  const bands = offsets.map((offsetHz) => {
    const limit = mask.find((l) => l.qualifier === offsetHz)
    const { fine: _fine, exponent: _exponent, ...b } = band('phase_noise', offsetHz)
    return { offsetHz, ...b, usl: limit?.usl ?? null, lsl: limit?.lsl ?? null }
  })

  const jitterLimit = limits.find((l) => l.name === 'integrated_jitter')
  const jb = band('integrated_jitter', 0)
  const jitterMean = find(summaries, 'integrated_jitter', 0)?.mean
  return {
    lot: { code: lot.code, partNumber: lot.partNumber, productName: lot.productName, status: lot.status, steps: lot.steps },
    step,
    ...book.tag(revisionId),
    revisions,
    population: 'first' as const,
    offsets: bands,
    jitter: jb.n === 0 ? null : {
      unit: 's' as const, n: jb.n, usl: jitterLimit?.usl ?? null, mean: jitterMean!,
      percentiles: { p10: jb.p10!, p50: jb.median!, p90: jb.p90! }, min: jb.min!, max: jb.max!, resolution: jb.resolution!,
      histogram: displayHistogram(jb.fine, jb.exponent, jb.min!, jb.max!, jitterBins(jb.n)),
    },
  }
}
