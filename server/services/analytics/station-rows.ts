// Pooling of lot_param_stats rows (one per lot × station) into one sample, without reading measurements.
import type { StatRow } from '../../../shared/types/param-stats'
import type { PooledSummary } from '../../../shared/types/capability'
import { sigmaFromMovingRange } from '../../../shared/utils/capability'
import { emptyMoments, mergeMoments, momentsFromShiftedSums, stdDev, type Moments } from '../../../shared/utils/moments'

/** The aggregate columns of one lot_param_stats row. */
export type { StatRow, PooledSummary }

export type PooledStats = { moments: Moments; mrSum: number; mrN: number; outOfSpec: number; failAll: number }

export function emptyPooled(): PooledStats {
  return { moments: emptyMoments(), mrSum: 0, mrN: 0, outOfSpec: 0, failAll: 0 }
}

/** Moments of one row; the sums are about its own shift, so each row is converted before merging. */
export function rowMoments(r: StatRow): Moments {
  return momentsFromShiftedSums(r.n, r.shift, r.sumD, r.sumSqD, r.min, r.max)
}

export function addRow(p: PooledStats, r: StatRow): PooledStats {
  return {
    moments: r.n > 0 ? mergeMoments(p.moments, rowMoments(r)) : p.moments,
    // Moving ranges stay within each station's own sequence; pooling them averages within-station variation.
    mrSum: p.mrSum + r.mrSum,
    mrN: p.mrN + r.mrN,
    outOfSpec: p.outOfSpec + r.outOfSpec,
    failAll: p.failAll + r.failAll,
  }
}

export function poolRows(rows: readonly StatRow[]): PooledStats {
  return rows.reduce(addRow, emptyPooled())
}

export function poolMerge(a: PooledStats, b: PooledStats): PooledStats {
  return {
    moments: mergeMoments(a.moments, b.moments),
    mrSum: a.mrSum + b.mrSum, mrN: a.mrN + b.mrN, outOfSpec: a.outOfSpec + b.outOfSpec, failAll: a.failAll + b.failAll,
  }
}

/** Rows pooled per key, keys in first-seen order. */
export function poolBy<R extends StatRow, K>(rows: readonly R[], key: (r: R) => K): Map<K, PooledStats> {
  const out = new Map<K, PooledStats>()
  for (const r of rows) {
    const k = key(r)
    out.set(k, addRow(out.get(k) ?? emptyPooled(), r))
  }
  return out
}


export function summarise(p: PooledStats): PooledSummary {
  const m = p.moments
  return {
    n: m.n,
    mean: m.n > 0 ? m.mean : null,
    sigmaOverall: m.n >= 2 ? stdDev(m) : null,
    sigmaWithin: p.mrN > 0 ? sigmaFromMovingRange(p.mrSum, p.mrN) : null,
    min: m.n > 0 ? m.min : null,
    max: m.n > 0 ? m.max : null,
  }
}
