// Pure arithmetic of the drift sums of one parameter and revision of a lot (all stations merged, one population):
// value against rank in test order, kept as Σ rank·d, Σd, Σd² and n with d = value − shift. The ranks are 0…n−1,
// so Σx and Σx² of the regression follow from n alone.
import type { CentredSums } from '../../../shared/utils/regression'

export type TrendGroup = { lotId: number; step: string; name: string; qualifier: number; revisionId: number }
export type TrendRow = TrendGroup & {
  allAttempts: boolean; n: number; shift: number; sumRd: number; sumD: number; sumSqD: number
  /** the last value in test order (start, then storage order) */
  lastStartedAt: number | null; lastId: number | null
  /** a value arrived before the last one: the ranks of the values after it moved, so Σ rank·d must be taken again */
  stale: boolean
}
export type TrendValue = { value: number; startedAt: number; id: number }

export function emptyTrendRow(group: TrendGroup, allAttempts: boolean, first: number): TrendRow {
  return { ...group, allAttempts, n: 0, shift: first, sumRd: 0, sumD: 0, sumSqD: 0, lastStartedAt: null, lastId: null, stale: false }
}

export const afterLast = (row: TrendRow, v: TrendValue) =>
  row.lastStartedAt === null || v.startedAt > row.lastStartedAt || (v.startedAt === row.lastStartedAt && v.id > row.lastId!)

/** Adds one value in place: at or after the last one it takes rank n; before it, the row goes stale (n and Σd, Σd² stay exact). */
export function addTrendValue(row: TrendRow, v: TrendValue): void {
  const d = v.value - row.shift
  if (afterLast(row, v)) {
    row.sumRd += row.n * d
    row.lastStartedAt = v.startedAt
    row.lastId = v.id
  } else {
    row.stale = true
  }
  row.sumD += d
  row.sumSqD += d * d
  row.n++
}

/** The folded values after a late one in test order: how many, and the sum of their d (value − the row's shift). */
export type ValuesAfter = { count: number; sumD: number }

/**
 * Adds a value older than the row's last at its place in test order: it takes the rank of the values before it
 * (n − after.count), and each value after it moves up one rank, so Σ rank·d grows by rank·d + Σd of those.
 */
export function insertTrendValue(row: TrendRow, v: TrendValue, after: ValuesAfter): void {
  const d = v.value - row.shift
  row.sumRd += (row.n - after.count) * d + after.sumD
  row.sumD += d
  row.sumSqD += d * d
  row.n++
}

/** The row of values already in test order (a repair or a rebuild), shifted by their mean. */
export function trendRowFromValues(group: TrendGroup, allAttempts: boolean, inTestOrder: readonly TrendValue[]): TrendRow {
  const mean = inTestOrder.reduce((s, v) => s + v.value, 0) / Math.max(1, inTestOrder.length)
  const row = emptyTrendRow(group, allAttempts, inTestOrder.length ? mean : 0)
  for (const v of inTestOrder) addTrendValue(row, v)
  return row
}

/**
 * The centred sums of the regression of value on x = rank / 1000 (slope per 1 000 units): x̄ = (n − 1)/2000,
 * Σ(x − x̄)² = n(n² − 1)/12 / 10⁶, Σ(x − x̄)(y − c) = (Σ rank·d − (n − 1)/2 · Σd) / 1000 with c = shift.
 */
export function centredTrendSums(row: Pick<TrendRow, 'n' | 'sumRd' | 'sumD' | 'sumSqD'>): CentredSums {
  const n = row.n
  return { n, sxx: (n * (n * n - 1)) / 12 / 1e6, sxy: (row.sumRd - ((n - 1) / 2) * row.sumD) / 1000, sy: row.sumD, syy: row.sumSqD }
}
