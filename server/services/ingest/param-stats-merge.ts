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

/** The fields of one population's sums; the first-attempt ones are the row's own, the all-attempt ones a-prefixed. */
type SampleField = 'n' | 'shift' | 'sumD' | 'sumSqD' | 'min' | 'max' | 'mrSum' | 'mrN' | 'lastValue' | 'lastStartedAt' | 'mrStale' | 'outOfSpec'
type SampleFields = Record<SampleField, keyof ParamRow>

const FIRST_ATTEMPT_FIELDS = {
  n: 'n', shift: 'shift', sumD: 'sumD', sumSqD: 'sumSqD', min: 'min', max: 'max', mrSum: 'mrSum', mrN: 'mrN',
  lastValue: 'lastValue', lastStartedAt: 'lastStartedAt', mrStale: 'mrStale', outOfSpec: 'outOfSpec',
} as const satisfies SampleFields

/** Where the all-attempt population keeps each of the sums (readers swap them in to read that population). */
export const ALL_ATTEMPT_FIELDS = {
  n: 'aN', shift: 'aShift', sumD: 'aSumD', sumSqD: 'aSumSqD', min: 'aMin', max: 'aMax', mrSum: 'aMrSum', mrN: 'aMrN',
  lastValue: 'aLastValue', lastStartedAt: 'aLastStartedAt', mrStale: 'aMrStale', outOfSpec: 'aOutOfSpec',
} as const satisfies SampleFields

/**
 * Adds one stored measurement to the row, in place. Plausible first attempts enter the first-attempt sample, every
 * plausible value the all-attempt one; every failure counts.
 */
export function addValue(row: ParamRow, m: StoredValue): void {
  if (!Number.isFinite(m.value)) return
  if (m.failed) row.failAll++
  if (m.implausible) return
  // a value is never taken out of the all-attempt population, so only its moving range can go stale
  addToSample(row, ALL_ATTEMPT_FIELDS, m)
  if (m.firstAttempt) addToSample(row, FIRST_ATTEMPT_FIELDS, m)
}

/** One population's sums, extremes, moving range and out-of-spec count take the value. */
function addToSample(row: ParamRow, f: SampleFields, m: StoredValue): void {
  // the two populations' fields have the same types, name for name
  const r = row as unknown as Record<keyof ParamRow, any>
  if (outOfSpec(m)) r[f.outOfSpec]++
  if (r[f.n] === 0) { r[f.min] = m.value; r[f.max] = m.value } else { r[f.min] = Math.min(r[f.min], m.value); r[f.max] = Math.max(r[f.max], m.value) }
  const d = m.value - r[f.shift]
  r[f.sumD] += d
  r[f.sumSqD] += d * d
  r[f.n]++
  if (r[f.lastStartedAt] === null || m.startedAt >= r[f.lastStartedAt]) {
    if (r[f.lastStartedAt] !== null && r[f.lastValue] !== null) { r[f.mrSum] += Math.abs(m.value - r[f.lastValue]); r[f.mrN]++ }
    r[f.lastValue] = m.value
    r[f.lastStartedAt] = m.startedAt
  } else {
    r[f.mrStale] = true
  }
}

/** Orders values as the moving range reads them: by start time, then by storage order. */
export function inTimeOrder(a: Pick<StoredValue, 'startedAt' | 'id'>, b: Pick<StoredValue, 'startedAt' | 'id'>): number {
  return a.startedAt - b.startedAt || a.id - b.id
}
