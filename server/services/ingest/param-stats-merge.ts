// Pure arithmetic of one lot × station parameter row: shifted sums for the moments, min and max, the moving range
// in time order, and failure counts. The fold applies measurements one by one, exactly as a per-run update would.

import type { ParamRow, ParamRowKey, StoredValue } from '../../../shared/types/param-stats'

export type { ParamRow, ParamRowKey, StoredValue }

/** A fresh row for a parameter first seen with this value. */
export function emptyParamRow(key: ParamRowKey, first: StoredValue): ParamRow {
  return {
    ...key, unit: first.unit, n: 0, shift: first.value, sumD: 0, sumSqD: 0, min: first.value, max: first.value,
    mrSum: 0, mrN: 0, lastValue: null, lastStartedAt: null, mrStale: false, outOfSpec: 0, failAll: 0,
    aN: 0, aShift: first.value, aSumD: 0, aSumSqD: 0, aMin: first.value, aMax: first.value,
    aMrSum: 0, aMrN: 0, aLastValue: null, aLastStartedAt: null, aMrStale: false, aOutOfSpec: 0,
  }
}

const outOfSpec = (m: StoredValue) => (m.lsl != null && m.value < m.lsl) || (m.usl != null && m.value > m.usl)

/**
 * Adds one stored measurement to the row, in place. Plausible first attempts enter the first-attempt sample, every
 * plausible value the all-attempt one; every failure counts.
 */
export function addValue(row: ParamRow, m: StoredValue): void {
  if (!Number.isFinite(m.value)) return
  if (m.failed) row.failAll++
  if (m.implausible) return
  addToAllAttempts(row, m)
  if (!m.firstAttempt) return
  if (outOfSpec(m)) row.outOfSpec++
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

/** The all-attempt half of addValue: a value is never taken out of this population, so only its moving range goes stale. */
function addToAllAttempts(row: ParamRow, m: StoredValue): void {
  if (outOfSpec(m)) row.aOutOfSpec++
  if (row.aN === 0) { row.aMin = m.value; row.aMax = m.value } else { row.aMin = Math.min(row.aMin, m.value); row.aMax = Math.max(row.aMax, m.value) }
  const d = m.value - row.aShift
  row.aSumD += d
  row.aSumSqD += d * d
  row.aN++
  if (row.aLastStartedAt === null || m.startedAt >= row.aLastStartedAt) {
    if (row.aLastStartedAt !== null && row.aLastValue !== null) { row.aMrSum += Math.abs(m.value - row.aLastValue); row.aMrN++ }
    row.aLastValue = m.value
    row.aLastStartedAt = m.startedAt
  } else {
    row.aMrStale = true
  }
}

/** Orders values as the moving range reads them: by start time, then by storage order. */
export function inTimeOrder(a: StoredValue, b: StoredValue): number {
  return a.startedAt - b.startedAt || a.id - b.id
}
