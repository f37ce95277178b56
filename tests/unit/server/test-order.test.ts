import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import {
  appendsOnly, compareTestTime, planAppend, planMerge, type NewAttempt, type StepSummary, type StoredAttempt,
} from '../../../server/services/ingest/test-order'

type Run = { uuid: string; startedAt: number; finishedAt: number; verdict: 'pass' | 'fail'; stationId: number; revisionId: number }

/** One unit step as the database would hold it, changed only through the plans. */
class Step {
  runs: StoredAttempt[] = []
  counters = new Map<number, { runs: number; units: number; firstPass: number; latestPass: number }>()
  firstVerdict: 'pass' | 'fail' | null = null
  latestVerdict: 'pass' | 'fail' | null = null
  latestRunId: number | null = null
  demoted: number[] = []
  private nextId = 1

  summary(): StepSummary | null {
    if (!this.runs.length) return null
    const latest = this.runs.find((r) => r.runId === this.latestRunId)!
    return { attempts: this.runs.length, firstVerdict: this.firstVerdict!, latest: { ...latest } }
  }

  /** Writes a group of new runs the way the write path does: the summary when it suffices, else every stored run. */
  write(group: Run[]) {
    const incoming: NewAttempt<Run>[] = group.map((r) => ({ ...r, ref: r }))
    const summary = this.summary()
    const plan = appendsOnly(summary, incoming) ? planAppend(summary, incoming) : planMerge([...this.runs].sort((a, b) => a.attempt - b.attempt), incoming)
    for (const m of plan.renumber) {
      // applied in the given order, the unique (unit, step, attempt) key never holds two runs
      const r = this.runs.find((x) => x.runId === m.runId)!
      expect(r.attempt).toBe(m.from)
      expect(this.runs.some((x) => x !== r && x.attempt === m.to)).toBe(false)
      r.attempt = m.to
    }
    const ids = new Map<Run, number>()
    for (const r of group) {
      const runId = this.nextId++
      ids.set(r, runId)
      expect(this.runs.some((x) => x.attempt === plan.attempts.get(r))).toBe(false)
      this.runs.push({ ...r, runId, attempt: plan.attempts.get(r)! })
    }
    if (plan.demotedFirst) this.demoted.push(plan.demotedFirst.runId)
    for (const c of plan.counters) {
      const row = this.counters.get(c.stationId) ?? { runs: 0, units: 0, firstPass: 0, latestPass: 0 }
      row.runs += c.runs; row.units += c.units; row.firstPass += c.firstPass; row.latestPass += c.latestPass
      this.counters.set(c.stationId, row)
    }
    this.firstVerdict = plan.firstVerdict
    this.latestVerdict = plan.latestVerdict
    this.latestRunId = 'runId' in plan.latest ? plan.latest.runId : ids.get(plan.latest.ref)!
  }
}

/** What a recount from the rows says: attempts by test time, counters on the station of the run they count. */
function recount(runs: Run[]) {
  const sorted = [...runs].sort(compareTestTime)
  const counters = new Map<number, { runs: number; units: number; firstPass: number; latestPass: number }>()
  const row = (s: number) => { const r = counters.get(s) ?? { runs: 0, units: 0, firstPass: 0, latestPass: 0 }; counters.set(s, r); return r }
  for (const r of sorted) row(r.stationId).runs++
  const first = sorted[0]!
  const last = sorted.at(-1)!
  row(first.stationId).units++
  if (first.verdict === 'pass') row(first.stationId).firstPass++
  if (last.verdict === 'pass') row(last.stationId).latestPass++
  return { order: sorted.map((r) => r.uuid), first: first.verdict, latest: last.verdict, counters }
}

function withoutZeros(m: Map<number, { runs: number; units: number; firstPass: number; latestPass: number }>) {
  return new Map([...m].filter(([, v]) => v.runs || v.units || v.firstPass || v.latestPass).sort((a, b) => a[0] - b[0]))
}

const runArb = fc.record({
  // few distinct times, so ties on start (and on finish) are common
  startedAt: fc.integer({ min: 0, max: 6 }),
  length: fc.integer({ min: 0, max: 2 }),
  verdict: fc.constantFrom<'pass' | 'fail'>('pass', 'fail'),
  stationId: fc.integer({ min: 1, max: 3 }),
})

describe('test-time order of a unit step', () => {
  it('orders by start, then finish, then the station run id', () => {
    const a = { startedAt: 10, finishedAt: 20, uuid: 'b' }
    expect(compareTestTime(a, { startedAt: 11, finishedAt: 12, uuid: 'a' })).toBeLessThan(0)
    expect(compareTestTime(a, { startedAt: 10, finishedAt: 19, uuid: 'c' })).toBeGreaterThan(0)
    expect(compareTestTime(a, { startedAt: 10, finishedAt: 20, uuid: 'a' })).toBeGreaterThan(0)
    expect(compareTestTime(a, { ...a })).toBe(0)
  })

  it('a passing run tested at 09:00 that arrives after a failing run tested at 10:00 becomes attempt 1, and the unit stays failed', () => {
    const s = new Step()
    const h = (hh: number) => Date.UTC(2026, 11, 2, hh)
    s.write([{ uuid: 'f', startedAt: h(10), finishedAt: h(10) + 60_000, verdict: 'fail', stationId: 1, revisionId: 1 }])
    s.write([{ uuid: 'p', startedAt: h(9), finishedAt: h(9) + 60_000, verdict: 'pass', stationId: 1, revisionId: 1 }])
    expect(s.runs.map((r) => [r.uuid, r.attempt])).toEqual([['f', 2], ['p', 1]])
    expect(s.firstVerdict).toBe('pass')
    expect(s.latestVerdict).toBe('fail')
    expect(s.demoted).toEqual([1])
    expect(s.counters.get(1)).toEqual({ runs: 2, units: 1, firstPass: 1, latestPass: 0 })
  })

  it('gives the same attempts, verdicts and counters as a recount, whatever the arrival order and grouping', () => {
    fc.assert(fc.property(
      fc.array(runArb, { minLength: 1, maxLength: 9 }).chain((specs) => fc.tuple(
        fc.constant(specs),
        fc.shuffledSubarray(specs.map((_, i) => i), { minLength: specs.length, maxLength: specs.length }),
        fc.array(fc.integer({ min: 1, max: 4 }), { minLength: specs.length, maxLength: specs.length }),
      )),
      ([specs, order, sizes]) => {
        const runs: Run[] = specs.map((r, i) => ({ uuid: `r${String(i).padStart(2, '0')}`, startedAt: r.startedAt * 1000, finishedAt: r.startedAt * 1000 + r.length * 100, verdict: r.verdict, stationId: r.stationId, revisionId: 1 }))
        const step = new Step()
        for (let i = 0, g = 0; i < order.length; g++) {
          const size = sizes[g]!
          step.write(order.slice(i, i + size).map((k) => runs[k]!))
          i += size
        }
        const want = recount(runs)
        const byAttempt = [...step.runs].sort((a, b) => a.attempt - b.attempt)
        expect(byAttempt.map((r) => r.attempt)).toEqual(runs.map((_, i) => i + 1))
        expect(byAttempt.map((r) => r.uuid)).toEqual(want.order)
        expect(step.firstVerdict).toBe(want.first)
        expect(step.latestVerdict).toBe(want.latest)
        expect(withoutZeros(step.counters)).toEqual(withoutZeros(want.counters))
      },
    ), { numRuns: 500 })
  })

  it('needs the stored runs only when a new run comes before the latest one', () => {
    const summary: StepSummary = { attempts: 2, firstVerdict: 'fail', latest: { runId: 7, verdict: 'pass', stationId: 1, startedAt: 100, finishedAt: 110, uuid: 'm' } }
    expect(appendsOnly(summary, [{ startedAt: 100, finishedAt: 110, uuid: 'n' }])).toBe(true)
    expect(appendsOnly(summary, [{ startedAt: 100, finishedAt: 110, uuid: 'l' }])).toBe(false)
    expect(appendsOnly(summary, [{ startedAt: 200, finishedAt: 210, uuid: 'a' }, { startedAt: 50, finishedAt: 60, uuid: 'b' }])).toBe(false)
    expect(appendsOnly(null, [{ startedAt: 0, finishedAt: 0, uuid: 'a' }])).toBe(true)
  })
})
