// The parameter view's histogram from the fine bins the fold keeps: display bins are unions of fine bins, so each
// count is exact for its edges, and nothing reads the lot's measurements. The caller has brought the lot's
// aggregates up to date (parameter-aggregates.ts folds once per view).
import type { Knex } from 'knex'
import { binExponent, displayHistogram } from '../../../shared/utils/fine-bins'
import { keptBins } from '../../database/repositories/param-bins'
import type { ParamKey } from '../../database/repositories/parameter-values'

/** At most `maxBins` bins over [lo, hi] (which holds every value), of the first attempts or of all attempts. */
export async function keptHistogram(db: Knex, key: ParamKey & { revisionId: number }, lo: number, hi: number, maxBins: number): Promise<{ edges: number[]; counts: number[] }> {
  const [group] = await keptBins(db, { lotId: key.lotId, step: key.step, revisionId: key.revisionId, names: [key.name], qualifier: key.qualifier })
  const fine = (group?.bins ?? []).map((b) => ({ k: b.k, n: key.firstOnly ? b.nFirst : b.nAll }))
  // equal values and no limits: a little room either side rather than one bin 2^−50 of the value wide
  const pad = hi > lo ? 0 : Math.max(Math.abs(lo) * 1e-6, 1e-12)
  return displayHistogram(fine, group?.exponent ?? binExponent(lo - pad, hi + pad), lo - pad, hi + pad, maxBins)
}
