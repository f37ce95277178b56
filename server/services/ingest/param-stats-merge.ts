// Pure arithmetic of one lot × station parameter row: shifted sums for the moments, min and max, the moving range
// in time order, and failure counts. The fold applies measurements one by one, exactly as a per-run update would.

import type { ParamRow, ParamRowKey, StoredValue } from '../../../shared/types/param-stats'

export type { ParamRow, ParamRowKey, StoredValue }

/** A fresh row for a parameter first seen with this value. */
export function emptyParamRow(key: ParamRowKey, first: StoredValue): ParamRow {
  return {
    ...key, unit: first.unit, n: 0, shift: first.value, sumD: 0, sumSqD: 0, min: first.value, max: first.value,
    mrSum: 0, mrN: 0, lastValue: null, lastStartedAt: null, mrStale: false, outOfSpec: 0, failAll: 0,
  }
}

/** Adds one stored measurement to the row, in place. Only plausible first attempts enter the sample; every failure counts. */
export function addValue(row: ParamRow, m: StoredValue): void {
  if (!Number.isFinite(m.value)) return
  if (m.failed) row.failAll++
  if (!m.firstAttempt || m.implausible) return
  if ((m.lsl != null && m.value < m.lsl) || (m.usl != null && m.value > m.usl)) row.outOfSpec++
  if (row.n === 0) { row.min = m.value; row.max = m.value } else { row.min = Math.min(row.min, m.value); row.max = Math.max(row.max, m.value) }
  const d = m.value - row.shift
  row.sumD += d
  row.sumSqD += d * d
  row.n++
  if (row.lastStartedAt === null || m.startedAt >= row.lastStartedAt) {
    if (row.lastStartedAt !== null && row.lastValue !== null) { row.mrSum += Math.abs(m.value - row.lastValue); row.mrN++ }
    row.lastValue = m.value
    row.lastStartedAt = m.startedAt
  } else {
    row.mrStale = true
  }
}

/** Orders values as the moving range reads them: by start time, then by storage order. */
export function inTimeOrder(a: StoredValue, b: StoredValue): number {
  return a.startedAt - b.startedAt || a.id - b.id
}
