// Which instruments a station held at a moment, which calibration record was in force for each, and whether that
// moment was past a due date. Pure: the services hand it the history, the tests hand it the edges.
//
// A holding covers [from, until): installed at `from`, gone at `until` (open while until is null).
// A calibration record is in force from its calibration date until it is superseded (from `supersededFrom` on) or a
// later calibration of the same instrument takes over. A test is taken past calibration when it is at or after the
// due date of the record in force, or when no record was in force at all.

export type HoldingSpan = { instrumentId: number; stationId: number; from: Date; until: Date | null }
export type CalibrationSpan = { id: number; instrumentId: number; calibratedOn: Date; dueAt: Date; supersededFrom: Date | null }
export type InstrumentInForce = { instrumentId: number; calibrationId: number | null }
export type CalibrationDecision = { instruments: InstrumentInForce[]; lapsed: boolean }

const t = (d: Date) => d.getTime()

/** Whether the span [from, until) covers the instant. */
export function spanCovers(span: { from: Date; until: Date | null }, at: Date): boolean {
  return t(span.from) <= t(at) && (span.until === null || t(at) < t(span.until))
}

/** Whether two spans [from, until) share any instant. */
export function spansOverlap(a: { from: Date; until: Date | null }, b: { from: Date; until: Date | null }): boolean {
  const aEnd = a.until === null ? Infinity : t(a.until)
  const bEnd = b.until === null ? Infinity : t(b.until)
  return t(a.from) < bEnd && t(b.from) < aEnd
}

/** The instruments the station held at the instant, by id. */
export function instrumentsHeldAt(holdings: readonly HoldingSpan[], stationId: number, at: Date): number[] {
  const ids = new Set<number>()
  for (const h of holdings) if (h.stationId === stationId && spanCovers(h, at)) ids.add(h.instrumentId)
  return [...ids].sort((a, b) => a - b)
}

/** The record in force for one instrument at the instant: the latest calibration not superseded by then. */
export function recordInForce(records: readonly CalibrationSpan[], instrumentId: number, at: Date): CalibrationSpan | null {
  let best: CalibrationSpan | null = null
  for (const r of records) {
    if (r.instrumentId !== instrumentId || t(r.calibratedOn) > t(at)) continue
    if (r.supersededFrom !== null && t(at) >= t(r.supersededFrom)) continue
    if (!best || t(r.calibratedOn) > t(best.calibratedOn) || (t(r.calibratedOn) === t(best.calibratedOn) && r.id > best.id)) best = r
  }
  return best
}

/** Past calibration at the instant: no record in force, or the instant is at or after its due date. */
export function lapsedAt(record: CalibrationSpan | null, at: Date): boolean {
  return record === null || t(at) >= t(record.dueAt)
}

/**
 * The record in force for each instrument and whether any was past calibration. No instruments at all is not
 * lapsed: there is nothing recorded to be past its date (the station page says so beside such a station).
 */
export function judgeInstruments(instrumentIds: readonly number[], records: readonly CalibrationSpan[], at: Date): CalibrationDecision {
  let lapsed = false
  const instruments = instrumentIds.map((instrumentId) => {
    const r = recordInForce(records, instrumentId, at)
    if (lapsedAt(r, at)) lapsed = true
    return { instrumentId, calibrationId: r ? r.id : null }
  })
  return { instruments, lapsed }
}
