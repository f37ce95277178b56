// Where a run takes its place among a unit's runs at one step: by test time (startedAt, then finishedAt, then the
// station's run id), whatever the order in which the runs arrive. Pure: the write plan gives it what the database
// holds and gets back attempt numbers, what moves, and the yield-counter changes.

export type TestTime = { startedAt: number; finishedAt: number; uuid: string }

export function compareTestTime(a: TestTime, b: TestTime): number {
  return a.startedAt - b.startedAt || a.finishedAt - b.finishedAt || (a.uuid < b.uuid ? -1 : a.uuid > b.uuid ? 1 : 0)
}

type Verdict = 'pass' | 'fail'

/** A run already stored at this unit and step. */
export type StoredAttempt = TestTime & { runId: number; attempt: number; verdict: Verdict; stationId: number; revisionId: number }

/** A run being written now; `ref` is the caller's handle for it. */
export type NewAttempt<R> = TestTime & { ref: R; verdict: Verdict; stationId: number; revisionId: number }

/** What the unit's step row says, with the latest run's test time: enough to place runs that come after it. */
export type StepSummary = {
  attempts: number
  firstVerdict: Verdict
  latest: TestTime & { runId: number; verdict: Verdict; stationId: number }
}

type Holder<R> = { kind: 'stored'; run: StoredAttempt } | { kind: 'new'; run: NewAttempt<R> }

/** A change to a lot's yield counters on one station's row. */
export type CounterDelta = { stationId: number; runs: number; units: number; firstPass: number; latestPass: number }

export type StepPlan<R> = {
  /** attempt number of each new run, in the order given */
  attempts: Map<R, number>
  /** stored runs whose attempt changes, highest old attempt first (the order that never collides on the unique key) */
  renumber: { runId: number; from: number; to: number }[]
  /** the stored run that was attempt 1 and no longer is: its values leave the first-attempt sample */
  demotedFirst: StoredAttempt | null
  /** a stored run that becomes attempt 1 (only where stored attempts did not follow test time): its values join it */
  promotedFirst: StoredAttempt | null
  /** the unit's step row afterwards */
  attemptsAfter: number
  firstVerdict: Verdict
  latestVerdict: Verdict
  /** the latest run afterwards: a stored run's id, or a new run */
  latest: { runId: number } | { ref: R }
  counters: CounterDelta[]
}

const pass = (v: Verdict) => (v === 'pass' ? 1 : 0)

/** True when every new run comes after the latest stored one, so the summary is enough to place them. */
export function appendsOnly(summary: StepSummary | null, incoming: readonly TestTime[]): boolean {
  if (!summary) return true
  return incoming.every((r) => compareTestTime(r, summary.latest) > 0)
}

function countersFor<R>(
  incoming: readonly NewAttempt<R>[],
  firstBefore: { verdict: Verdict; stationId: number } | null, firstAfter: { verdict: Verdict; stationId: number },
  latestBefore: { verdict: Verdict; stationId: number } | null, latestAfter: { verdict: Verdict; stationId: number },
): CounterDelta[] {
  const rows = new Map<number, CounterDelta>()
  const row = (stationId: number) => {
    let r = rows.get(stationId)
    if (!r) { r = { stationId, runs: 0, units: 0, firstPass: 0, latestPass: 0 }; rows.set(stationId, r) }
    return r
  }
  for (const r of incoming) row(r.stationId).runs++
  // each counter sits on the row of the station that took the run it counts, as a recount from the rows puts it
  if (firstBefore !== firstAfter) {
    if (firstBefore) { row(firstBefore.stationId).units--; row(firstBefore.stationId).firstPass -= pass(firstBefore.verdict) }
    row(firstAfter.stationId).units++
    row(firstAfter.stationId).firstPass += pass(firstAfter.verdict)
  }
  if (latestBefore !== latestAfter) {
    if (latestBefore) row(latestBefore.stationId).latestPass -= pass(latestBefore.verdict)
    row(latestAfter.stationId).latestPass += pass(latestAfter.verdict)
  }
  return [...rows.values()].sort((a, b) => a.stationId - b.stationId)
}

/** New runs that all come after the stored ones (or a unit step seen for the first time). */
export function planAppend<R>(summary: StepSummary | null, incoming: readonly NewAttempt<R>[]): StepPlan<R> {
  if (!incoming.length) throw new RangeError('nothing to place')
  const sorted = [...incoming].sort(compareTestTime)
  const attempts = new Map<R, number>()
  const before = summary?.attempts ?? 0
  sorted.forEach((r, i) => attempts.set(r.ref, before + i + 1))
  const last = sorted.at(-1)!
  const firstNew = sorted[0]!
  // the stored first attempt stays first: only its verdict is needed, and it is not moved
  const storedFirst = summary ? { verdict: summary.firstVerdict, stationId: -1 } : null
  const latestBefore = summary ? summary.latest : null
  return {
    attempts, renumber: [], demotedFirst: null, promotedFirst: null, attemptsAfter: before + sorted.length,
    firstVerdict: summary ? summary.firstVerdict : firstNew.verdict, latestVerdict: last.verdict, latest: { ref: last.ref },
    counters: countersFor(incoming, storedFirst, storedFirst ?? firstNew, latestBefore, last),
  }
}

/** New runs placed among every stored run of the unit at the step (`stored` in attempt order). */
export function planMerge<R>(stored: readonly StoredAttempt[], incoming: readonly NewAttempt<R>[]): StepPlan<R> {
  if (!incoming.length) throw new RangeError('nothing to place')
  const all: Holder<R>[] = [
    ...stored.map((run) => ({ kind: 'stored' as const, run })),
    ...incoming.map((run) => ({ kind: 'new' as const, run })),
  ].sort((a, b) => compareTestTime(a.run, b.run))
  const attempts = new Map<R, number>()
  const renumber: StepPlan<R>['renumber'] = []
  all.forEach((h, i) => {
    if (h.kind === 'new') attempts.set(h.run.ref, i + 1)
    else if (h.run.attempt !== i + 1) renumber.push({ runId: h.run.runId, from: h.run.attempt, to: i + 1 })
  })
  renumber.sort((a, b) => b.from - a.from)
  const firstStored = stored.find((s) => s.attempt === 1) ?? null
  const latestStored = stored.length ? stored.reduce((a, b) => (a.attempt > b.attempt ? a : b)) : null
  const first = all[0]!
  const last = all.at(-1)!
  const firstMoved = first.run !== firstStored
  return {
    attempts, renumber,
    demotedFirst: firstMoved ? firstStored : null,
    promotedFirst: firstMoved && first.kind === 'stored' ? first.run : null,
    attemptsAfter: all.length, firstVerdict: first.run.verdict, latestVerdict: last.run.verdict,
    latest: last.kind === 'new' ? { ref: last.run.ref } : { runId: last.run.runId },
    counters: countersFor(incoming, firstStored, first.run, latestStored, last.run),
  }
}
