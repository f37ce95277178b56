// Decides, for a group of judged runs and what the database holds for their units, each run's outcome (stored,
// replay, conflict, refused), its attempt by test time, and every row the group changes. Pure: write-runs reads
// the rows, calls these, and sends the statements.
import type { LockedUnitRow, RunRef, RunRow, StoredAttemptRow, StoredUuidRow, StepCounterRow, UnitStepRow } from '../../database/repositories/run-writes'
import type { Retest } from '../../database/repositories/certificate-retests'
import type { StationRun } from '../../utils/run-validator'
import type { Prepared, StationRef } from './ingest-run'
import type { CounterRow, Standing } from '../../database/repositories/unit-standing'
import { contribution, standingOf, type StandingStep } from './unit-standing'
import { appendsOnly, planAppend, planMerge, type NewAttempt, type StepPlan, type StepSummary, type StoredAttempt } from './test-order'

export type RunToWrite = {
  station: StationRef
  run: StationRun
  hash: string
  ctx: Prepared
  /** when the run reached Tercet, for history loaded later (the demo); otherwise the database's clock */
  receivedAt?: Date | null
}

export type WriteOutcome =
  | { kind: 'stored'; attempt: number; runId: number }
  /** the same id and body were stored before (runId), or earlier in this group (sameAs, an index into the group) */
  | { kind: 'replay'; runId?: number; sameAs?: number }
  | { kind: 'conflict'; detail: string }
  | { kind: 'refused'; detail: string; errors: { pointer: string; message: string }[] }

const unitKey = (productId: number, serial: string) => `${productId}\u0000${serial}`
const stepKey = (unitId: number, step: string) => `${unitId}\u0000${step}`

/** `certified`: the unit has a valid certificate, so a run that becomes its latest at a step is a retest after issue */
export type LockedUnit = {
  id: number; productId: number; serial: string; lotId: number; certified: boolean; steps: Map<string, StepSummary>
  /** every step row with its latest run, for the unit's standing; `stood` false: the unit is new and not yet counted */
  standing: Map<string, StandingStep>; stood: boolean
}

/** Units by product and serial, with the step summaries the lock statements returned. */
export function lockedUnits(productId: number, rows: LockedUnitRow[], into = new Map<string, LockedUnit>()): Map<string, LockedUnit> {
  for (const r of rows) {
    const key = unitKey(productId, r.serial)
    let u = into.get(key)
    if (!u) {
      u = { id: Number(r.id), productId, serial: r.serial, lotId: Number(r.lot_id), certified: !!Number(r.certified), steps: new Map(), standing: new Map(), stood: r.unit_state !== null }
      into.set(key, u)
    }
    if (r.step !== null && r.latest_run_id !== null) {
      u.standing.set(r.step, {
        step: r.step, attempts: Number(r.attempts), firstVerdict: r.first_verdict!, latestVerdict: r.latest_verdict!, latestRunId: Number(r.latest_run_id),
        rank: Number(r.latest_run_id), stationId: Number(r.latest_station_id), finishedAt: new Date(r.latest_finished_at!), lapsed: !!Number(r.latest_lapsed),
      })
      u.steps.set(r.step, {
        attempts: Number(r.attempts), firstVerdict: r.first_verdict!,
        latest: {
          runId: Number(r.latest_run_id), verdict: r.latest_verdict!, stationId: Number(r.latest_station_id),
          startedAt: new Date(r.latest_started_at!).getTime(), finishedAt: new Date(r.latest_finished_at!).getTime(), uuid: r.latest_uuid!,
        },
      })
    }
  }
  return into
}

/** The units a group writes, per product, each with the lot of its first run: what the unit statements create and lock. */
export function unitsToLock(items: RunToWrite[]): Map<number, { serials: { serial: string; lotId: number }[]; steps: string[] }> {
  const out = new Map<number, { serials: Map<string, number>; steps: Set<string> }>()
  for (const it of items) {
    const p = it.ctx.product.id
    let e = out.get(p)
    if (!e) { e = { serials: new Map(), steps: new Set() }; out.set(p, e) }
    if (!e.serials.has(it.run.serial)) e.serials.set(it.run.serial, it.ctx.lotId)
    e.steps.add(it.run.step)
  }
  // serial order everywhere: two groups lock shared units in the same order and wait rather than deadlock
  return new Map([...out].sort((a, b) => a[0] - b[0]).map(([p, e]) => [p, {
    serials: [...e.serials].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0)).map(([serial, lotId]) => ({ serial, lotId })),
    steps: [...e.steps].sort(),
  }]))
}

type Accepted = { index: number; item: RunToWrite; unit: LockedUnit }

export type Screened = {
  outcomes: (WriteOutcome | undefined)[]
  /** accepted runs by unit step, in group order */
  byStep: Map<string, Accepted[]>
  /** unit steps whose new runs do not all come after the latest stored one: every stored run is needed */
  needHistory: { unitId: number; step: string }[]
  /** the locked unit a run names */
  unitOf: (item: RunToWrite) => number
}

const time = (it: RunToWrite) => ({ startedAt: it.ctx.startedAt.getTime(), finishedAt: it.ctx.finishedAt.getTime(), uuid: it.run.id })

/** Replays, conflicts and serials of another lot are answered here; the rest are grouped by unit step. */
export function screen(items: RunToWrite[], units: Map<string, LockedUnit>, stored: StoredUuidRow[]): Screened {
  const outcomes: (WriteOutcome | undefined)[] = new Array(items.length)
  const storedByUuid = new Map(stored.map((s) => [s.uuid, s]))
  const acceptedByUuid = new Map<string, number>()
  const byStep = new Map<string, Accepted[]>()
  items.forEach((item, index) => {
    const before = storedByUuid.get(item.run.id)
    if (before) {
      outcomes[index] = before.body_hash === item.hash ? { kind: 'replay', runId: Number(before.id) }
        : { kind: 'conflict', detail: `Run ${item.run.id} was already stored with a different body.` }
      return
    }
    const earlier = acceptedByUuid.get(item.run.id)
    if (earlier !== undefined) {
      outcomes[index] = items[earlier]!.hash === item.hash ? { kind: 'replay', sameAs: earlier }
        : { kind: 'conflict', detail: `Run ${item.run.id} was already stored with a different body.` }
      return
    }
    const unit = units.get(unitKey(item.ctx.product.id, item.run.serial))!
    if (unit.lotId !== item.ctx.lotId) {
      outcomes[index] = { kind: 'refused', detail: `Serial ${item.run.serial} is recorded in another lot.`, errors: [{ pointer: '/lot', message: 'the serial belongs to another lot' }] }
      return
    }
    acceptedByUuid.set(item.run.id, index)
    const key = stepKey(unit.id, item.run.step)
    const list = byStep.get(key) ?? []
    list.push({ index, item, unit })
    byStep.set(key, list)
  })
  const needHistory: Screened['needHistory'] = []
  for (const list of byStep.values()) {
    const { unit, item } = list[0]!
    if (!appendsOnly(unit.steps.get(item.run.step) ?? null, list.map((a) => time(a.item)))) needHistory.push({ unitId: unit.id, step: item.run.step })
  }
  return { outcomes, byStep, needHistory, unitOf: (it) => units.get(unitKey(it.ctx.product.id, it.run.serial))!.id }
}

export type GroupPlan = {
  outcomes: (WriteOutcome | undefined)[]
  steps: { unitId: number; lotId: number; certified: boolean; step: string; accepted: Accepted[]; plan: StepPlan<number> }[]
}

/** Places every accepted run by test time; `history` holds the stored runs of the unit steps screen asked for. */
export function placeRuns(s: Screened, history: StoredAttemptRow[]): GroupPlan {
  const storedBy = new Map<string, StoredAttempt[]>()
  for (const r of history) {
    const key = stepKey(Number(r.unit_id), r.step)
    const list = storedBy.get(key) ?? []
    list.push({
      runId: Number(r.id), attempt: Number(r.attempt), verdict: r.server_verdict, stationId: Number(r.station_id), revisionId: Number(r.revision_id ?? 0),
      startedAt: new Date(r.started_at).getTime(), finishedAt: new Date(r.finished_at).getTime(), uuid: r.uuid,
    })
    storedBy.set(key, list)
  }
  const steps: GroupPlan['steps'] = []
  for (const [key, accepted] of s.byStep) {
    const { unit, item } = accepted[0]!
    const incoming: NewAttempt<number>[] = accepted.map((a) => ({
      ...time(a.item), ref: a.index, verdict: a.item.ctx.judged.verdict, stationId: a.item.station.id, revisionId: a.item.ctx.revision.id,
    }))
    const full = storedBy.get(key)
    const plan = full ? planMerge(full, incoming) : planAppend(unit.steps.get(item.run.step) ?? null, incoming)
    steps.push({ unitId: unit.id, lotId: unit.lotId, certified: unit.certified, step: item.run.step, accepted, plan })
  }
  return { outcomes: s.outcomes, steps }
}

export function runRowFor(it: RunToWrite, unitId: number, attempt: number): RunRow {
  const { run, ctx, station } = it
  return {
    uuid: run.id, bodyHash: it.hash, unitId, lotId: ctx.lotId, stationId: station.id, revisionId: ctx.revision.id, step: run.step, attempt,
    startedAt: ctx.startedAt, finishedAt: ctx.finishedAt, operator: run.operator ?? null, softwareSequence: run.software?.sequence ?? null,
    softwareVersion: run.software?.version ?? null, temperatureC: run.conditions?.temperatureC ?? null,
    supplyV: run.conditions?.supplyV ?? null, stationVerdict: run.stationVerdict ?? null, serverVerdict: ctx.judged.verdict,
    verdictDisagrees: !!run.stationVerdict && run.stationVerdict !== ctx.judged.verdict, missingRequired: ctx.judged.missingRequired,
    calibrationLapsed: ctx.calibrationLapsed, measurementIssue: ctx.judged.measurementIssue, reference: run.reference ?? null,
    receivedAt: it.receivedAt ?? null,
  }
}

/**
 * The rows that follow from the plan once the new runs have ids. `rankOf` orders a new run among the unit's latest
 * runs as its id will (after every stored one, in insert order); `productSteps` are the products' steps as read
 * under the write's shared lock.
 */
export function rowsAfter(plan: GroupPlan, runIds: Map<number, RunRef>, rankOf: (index: number) => number, productSteps: Map<number, readonly string[]>) {
  const unitSteps: UnitStepRow[] = []
  const counters: StepCounterRow[] = []
  const demoted: number[] = []
  const promoted: number[] = []
  const rebuild: { lotId: number; step: string; revisionId: number; stationId: number }[] = []
  const retests: Retest[] = []
  // per unit: its step rows after the write, and the station whose counter row takes the difference (a station of the write)
  const after = new Map<LockedUnit, { steps: Map<string, StandingStep>; stationId: number }>()
  const times = new Map<string, { lotId: number; stationId: number; first: Date; last: Date }>()
  for (const s of plan.steps) {
    const p = s.plan
    const latestRunId = 'runId' in p.latest ? p.latest.runId : runIds.get(p.latest.ref)!
    if (s.certified && 'ref' in p.latest) {
      const ref = p.latest.ref
      const a = s.accepted.find((x) => x.index === ref)!
      retests.push({ unitId: s.unitId, stationId: a.item.station.id, step: s.step, runId: latestRunId, uuid: a.item.run.id, verdict: p.latestVerdict })
    }
    unitSteps.push({ unitId: s.unitId, step: s.step, attempts: p.attemptsAfter, firstVerdict: p.firstVerdict, latestVerdict: p.latestVerdict, latestRunId })
    const unit = s.accepted[0]!.unit
    if (!after.has(unit)) after.set(unit, { steps: new Map(unit.standing), stationId: s.accepted[0]!.item.station.id })
    const before = unit.standing.get(s.step)
    let latest: Pick<StandingStep, 'rank' | 'stationId' | 'finishedAt' | 'lapsed'>
    if ('ref' in p.latest) {
      const ref = p.latest.ref
      const a = s.accepted.find((x) => x.index === ref)!
      latest = { rank: rankOf(ref), stationId: a.item.station.id, finishedAt: a.item.ctx.finishedAt, lapsed: a.item.ctx.calibrationLapsed }
    } else {
      // a stored run stays the latest only when it already was (runs placed before it leave it so)
      if (!before || Number(before.latestRunId) !== p.latest.runId) throw new Error(`unit ${s.unitId} ${s.step}: the latest stored run is not the one locked`)
      latest = { rank: before.rank, stationId: before.stationId, finishedAt: before.finishedAt, lapsed: before.lapsed }
    }
    after.get(unit)!.steps.set(s.step, { step: s.step, attempts: p.attemptsAfter, firstVerdict: p.firstVerdict, latestVerdict: p.latestVerdict, latestRunId, ...latest })
    for (const a of s.accepted) {
      const t = times.get(`${s.lotId}:${a.item.station.id}`)
      const [f, l] = [a.item.ctx.startedAt, a.item.ctx.finishedAt]
      if (!t) times.set(`${s.lotId}:${a.item.station.id}`, { lotId: s.lotId, stationId: a.item.station.id, first: f, last: l })
      else { if (f < t.first) t.first = f; if (l > t.last) t.last = l }
    }
    for (const c of p.counters) counters.push({ lotId: s.lotId, step: s.step, ...c })
    for (const [moved, list] of [[p.demotedFirst, demoted], [p.promotedFirst, promoted]] as const) {
      if (!moved) continue
      list.push(moved.runId)
      rebuild.push({ lotId: s.lotId, step: s.step, revisionId: moved.revisionId, stationId: moved.stationId })
    }
  }
  const { standings, unitCounters } = standingChanges(after, times, productSteps)
  return { unitSteps, counters: mergeCounters(counters), demoted, promoted, rebuild, retests, standings, unitCounters }
}

/** Each written unit's standing after the write, and the counters' changes: after minus before, plus the run times. */
function standingChanges(after: Map<LockedUnit, { steps: Map<string, StandingStep>; stationId: number }>,
  times: Map<string, { lotId: number; stationId: number; first: Date; last: Date }>, productSteps: Map<number, readonly string[]>) {
  const standings: { id: number; productId: number; lotId: number; serial: string; s: Standing }[] = []
  const rows = new Map<string, CounterRow>()
  const row = (lotId: number, stationId: number) => {
    const k = `${lotId}:${stationId}`
    let r = rows.get(k)
    if (!r) { r = { lotId, stationId, counts: contribution(null), firstRunAt: null, lastRunAt: null }; rows.set(k, r) }
    return r
  }
  for (const [unit, a] of after) {
    const steps = productSteps.get(unit.productId) ?? []
    const s = standingOf(a.steps.values(), steps)
    standings.push({ id: unit.id, productId: unit.productId, lotId: unit.lotId, serial: unit.serial, s })
    const was = contribution(unit.stood ? standingOf(unit.standing.values(), steps) : null)
    const now = contribution(s)
    const r = row(unit.lotId, a.stationId)
    for (const c of Object.keys(now) as (keyof typeof now)[]) r.counts[c] += now[c] - was[c]
  }
  for (const t of times.values()) {
    const r = row(t.lotId, t.stationId)
    r.firstRunAt = t.first
    r.lastRunAt = t.last
  }
  return { standings, unitCounters: [...rows.values()] }
}

function mergeCounters(rows: StepCounterRow[]): StepCounterRow[] {
  const by = new Map<string, StepCounterRow>()
  for (const r of rows) {
    const k = `${r.lotId}\u0000${r.step}\u0000${r.stationId}`
    const e = by.get(k)
    if (!e) { by.set(k, { ...r }); continue }
    e.runs += r.runs; e.units += r.units; e.firstPass += r.firstPass; e.latestPass += r.latestPass
  }
  return [...by.values()]
}
