// Which stretch of an instrument's use an out-of-tolerance calibration puts in doubt, and the decision rules of its
// review. Pure: the services hand it the instrument's records, the tests hand it the edges.
//
// The window of a record found out of tolerance is [from, to): `to` is that record's calibration date, `from` the
// calibration date of the latest earlier record of the same instrument whose as-found result was in tolerance.
//  - The earlier in-tolerance calibration is the last moment the instrument is known to have been right, so runs from
//    it on (a run at that very instant included) are in doubt; a record is in force from its calibration date
//    inclusive, so a run at `from` was measured under the record the drift followed.
//  - A run at the out-of-tolerance record's own calibration date or later was measured under that record, i.e. after
//    the laboratory adjusted the instrument: `to` is excluded.
//  - Records carried over from the former instrument list have no as-found result (null): they say the instrument was
//    calibrated, not that it was found right, so they do not close the window and it reaches further back.
//  - With no earlier in-tolerance record the window opens at the instrument's earliest record (which may be the
//    out-of-tolerance record itself, giving an empty window): runs before any record was in force were stored as
//    taken past calibration and no release passes them on that flag alone.
//  - A record withdrawn from its own calibration date on (superseded from that date or earlier) never stood and is
//    no bound; a record superseded later still says what the laboratory found on its date.

export type ImpactRecord = { id: number; calibratedOn: Date; asFound: 'in_tolerance' | 'out_of_tolerance' | null; supersededFrom: Date | null }

export type ImpactWindow = {
  from: Date
  to: Date
  /** what opens the window: an earlier in-tolerance record, or the instrument's earliest record when there is none */
  basis: { kind: 'in_tolerance' | 'earliest'; recordId: number }
}

export const IMPACT_DECISIONS = ['no_impact', 'retest', 'recall'] as const
export type ImpactDecision = (typeof IMPACT_DECISIONS)[number]

export const IMPACT_DECISION_LABELS: Record<ImpactDecision, string> = {
  no_impact: 'No impact',
  retest: 'Retest',
  recall: 'Recall',
}

const t = (d: Date) => d.getTime()
const stood = (r: ImpactRecord) => r.supersededFrom === null || t(r.supersededFrom) > t(r.calibratedOn)
const before = (a: ImpactRecord, b: ImpactRecord) => t(a.calibratedOn) < t(b.calibratedOn) || (t(a.calibratedOn) === t(b.calibratedOn) && a.id < b.id)

/** The window of doubt of `target` among the records of its instrument (the target included), or null when it is not out of tolerance. */
export function impactWindow(records: readonly ImpactRecord[], target: ImpactRecord): ImpactWindow | null {
  if (target.asFound !== 'out_of_tolerance') return null
  const earlier = records.filter((r) => r.id !== target.id && stood(r) && before(r, target))
  let bound: ImpactRecord | null = null
  for (const r of earlier) if (r.asFound === 'in_tolerance' && (!bound || before(bound, r))) bound = r
  if (bound) return { from: bound.calibratedOn, to: target.calibratedOn, basis: { kind: 'in_tolerance', recordId: bound.id } }
  let first: ImpactRecord = target
  for (const r of earlier) if (before(r, first)) first = r
  return { from: first.calibratedOn, to: target.calibratedOn, basis: { kind: 'earliest', recordId: first.id } }
}

/** Whether a run started at `at` lies in the window [from, to). */
export function inImpactWindow(w: { from: Date; to: Date }, at: Date): boolean {
  return t(w.from) <= t(at) && t(at) < t(w.to)
}

/** A decision needs a reason unless it says the finding changes nothing for the unit. */
export function decisionNeedsReason(d: ImpactDecision): boolean {
  return d !== 'no_impact'
}
