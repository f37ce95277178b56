// A unit's standing from its step rows (pure): the list's verdict and columns, and the release check of
// lot-readiness.ts. The write path computes it before and after a write from the rows it holds under lock, writes
// the after onto the unit's row and adds the difference to the lot's counters, so the counters always equal the sum
// over the lot's units of `contribution` (the recount in repositories/unit-standing.ts does the same in SQL).
import type { Counter, Standing } from '../../database/repositories/unit-standing'
import type { RunRef } from '../../database/repositories/run-writes'
import { overallVerdict } from '../shipments/unit-verdict'

export type StandingStep = {
  step: string; attempts: number; firstVerdict: 'pass' | 'fail'; latestVerdict: 'pass' | 'fail'
  /** the latest run: its id, and a number ordering it among the unit's latest runs as ids do (new runs come last) */
  latestRunId: RunRef; rank: number; stationId: number; finishedAt: Date; lapsed: boolean
}

/**
 * Fail when some step's latest result fails, pass once the product's last step has a result with nothing failing,
 * incomplete before that, untested without any. Ready: a passing latest result at every step of the product, none
 * taken past a calibration due date. Passed all: a passing latest result at every step and no failing one.
 */
export function standingOf(steps: Iterable<StandingStep>, productSteps: readonly string[]): Standing {
  const list = [...steps]
  const lastStep = productSteps.at(-1)
  const at = new Map(list.map((s) => [s.step, s]))
  const anyFail = list.some((s) => s.latestVerdict === 'fail')
  const completed = lastStep !== undefined && at.has(lastStep)
  const latest = list.length ? list.reduce((a, b) => (b.rank > a.rank ? b : a)) : null
  return {
    state: !list.length ? 'untested' : anyFail ? 'fail' : completed ? 'pass' : 'incomplete',
    completed,
    firstPass: list.length ? !list.some((s) => s.firstVerdict === 'fail') : null,
    stepsTested: list.length,
    maxAttempts: list.reduce((m, s) => Math.max(m, s.attempts), 0),
    runs: list.reduce((n, s) => n + s.attempts, 0),
    lastStep: latest?.step ?? null, lastStationId: latest?.stationId ?? null, lastTestedAt: latest?.finishedAt ?? null, latestRunId: latest?.latestRunId ?? null,
    ready: productSteps.every((p) => at.get(p)?.latestVerdict === 'pass' && !at.get(p)!.lapsed),
    passedAll: overallVerdict(productSteps, list) === 'pass',
  }
}

/** What one unit adds to its lot's counters (a unit not yet stood adds nothing). */
export function contribution(s: Standing | null): Record<Counter, number> {
  if (!s) return { units: 0, completed: 0, passed: 0, failed: 0, in_progress: 0, untested: 0, retested: 0, not_ready: 0, passed_all: 0 }
  return {
    units: 1, completed: +s.completed, passed: +(s.state === 'pass'), failed: +(s.state === 'fail'),
    in_progress: +(s.state === 'untested' || s.state === 'incomplete'), untested: +(s.state === 'untested'), retested: +(s.maxAttempts > 1), not_ready: +!s.ready, passed_all: +s.passedAll,
  }
}
