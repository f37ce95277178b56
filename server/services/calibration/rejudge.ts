// Judging stored runs again after their calibration history changed: their instrument links and their flag are
// rewritten inside the caller's transaction, which also holds the history version row.
import type { Knex } from 'knex'
import type { RejudgeSummaryView } from '../../../shared/types/calibration'
import { instrumentsHeldAt, judgeInstruments, type CalibrationSpan, type HoldingSpan } from '../../../shared/utils/calibration-history'
import { holdingsOfInstrument, holdingsOfStations, shareLockHistoryVersion, spansOfInstruments } from '../../database/repositories/calibration'
import {
  claimRejudges, deleteLinks, linksOfRuns, lotCodesOfRuns, queuedRejudges, runInstrumentsInsert, runsById, runsLinkedTo, setRunsLapsed,
  unnamedRunsOfStations, type CandidateRun,
} from '../../database/repositories/calibration-runs'
import { restandUnitsOfRuns } from '../../database/repositories/unit-standing'
import { writeAudit } from '../../database/repositories/audit'
import { writeTransaction } from '../../database/write-retries'

/** What a history change did to stored runs; kept in its audit row. */
export type RejudgeSummary = RejudgeSummaryView

const CHUNK = 1000

/** Runs whose judgement a change of the instrument's records from `since` on can move. */
export async function runsTouchedByRecords(trx: Knex, instrumentId: number, since: Date): Promise<CandidateRun[]> {
  const found = await runsLinkedTo(trx, [instrumentId], since)
  // runs of the stations that held it then, also when a link is missing (runs stored before links were kept)
  for (const h of await holdingsOfInstrument(trx, instrumentId)) {
    if (h.until !== null && h.until.getTime() <= since.getTime()) continue
    const from = h.from.getTime() > since.getTime() ? h.from : since
    found.push(...await unnamedRunsOfStations(trx, [h.stationId], from, h.until))
  }
  return found
}

/** Runs of a station whose instruments a holding change over [from, until) can move. */
export function runsTouchedByHolding(trx: Knex, stationId: number, from: Date, until: Date | null): Promise<CandidateRun[]> {
  return unnamedRunsOfStations(trx, [stationId], from, until)
}

/**
 * Judges the runs again from the history as the transaction sees it: a run that named its instruments keeps them,
 * any other takes those its station held at its test time. Rewrites only what changed.
 */
export async function rejudgeRuns(trx: Knex, candidates: readonly CandidateRun[]): Promise<RejudgeSummary> {
  const runs = [...new Map(candidates.map((r) => [r.id, r])).values()].sort((a, b) => a.id - b.id)
  const holdings = new Map<number, HoldingSpan[]>()
  const spans = new Map<number, CalibrationSpan[]>()
  const summary: RejudgeSummary = { runs: runs.length, relinked: 0, nowLapsed: 0, nowInCalibration: 0, lots: [] }
  const flagged: number[] = []

  for (let i = 0; i < runs.length; i += CHUNK) {
    const chunk = runs.slice(i, i + CHUNK)
    const stations = [...new Set(chunk.map((r) => r.stationId))].filter((s) => !holdings.has(s))
    for (const s of stations) holdings.set(s, [])
    for (const h of await holdingsOfStations(trx, stations)) holdings.get(h.stationId)!.push(h)
    const links = await linksOfRuns(trx, chunk.map((r) => r.id))
    const linksOf = new Map<number, typeof links>()
    for (const l of links) linksOf.set(l.runId, [...(linksOf.get(l.runId) ?? []), l])

    const plans = chunk.map((run) => {
      const stored = linksOf.get(run.id) ?? []
      const named = stored.some((l) => l.named)
      const ids = named ? stored.map((l) => l.instrumentId).sort((a, b) => a - b) : instrumentsHeldAt(holdings.get(run.stationId)!, run.stationId, run.startedAt)
      return { run, stored, named, ids }
    })
    const need = [...new Set(plans.flatMap((p) => p.ids))].filter((id) => !spans.has(id))
    for (const id of need) spans.set(id, [])
    for (const s of await spansOfInstruments(trx, need)) spans.get(s.instrumentId)!.push(s)

    const relink: { runId: number; instrumentId: number; calibrationId: number | null; named: boolean }[] = []
    const relinkIds: number[] = []
    const toLapsed: number[] = []
    const toFine: number[] = []
    for (const p of plans) {
      const decision = judgeInstruments(p.ids, p.ids.flatMap((id) => spans.get(id)!), p.run.startedAt)
      const key = (xs: { instrumentId: number; calibrationId: number | null }[]) => xs.map((x) => `${x.instrumentId}:${x.calibrationId}`).sort().join(',')
      if (key(decision.instruments) !== key(p.stored)) {
        relinkIds.push(p.run.id)
        for (const x of decision.instruments) relink.push({ runId: p.run.id, ...x, named: p.named })
      }
      if (decision.lapsed !== p.run.lapsed) (decision.lapsed ? toLapsed : toFine).push(p.run.id)
    }
    await deleteLinks(trx, relinkIds)
    for (let k = 0; k < relink.length; k += CHUNK) {
      const st = runInstrumentsInsert(relink.slice(k, k + CHUNK))
      await trx.raw(st.sql, st.values as Knex.RawBinding[])
    }
    await setRunsLapsed(trx, toLapsed, true)
    await setRunsLapsed(trx, toFine, false)
    // a unit's readiness reads its latest runs' calibration flags
    await restandUnitsOfRuns(trx, [...toLapsed, ...toFine])
    summary.relinked += relinkIds.length
    summary.nowLapsed += toLapsed.length
    summary.nowInCalibration += toFine.length
    flagged.push(...toLapsed, ...toFine)
  }
  for (let i = 0; i < flagged.length; i += CHUNK) summary.lots.push(...await lotCodesOfRuns(trx, flagged.slice(i, i + CHUNK)))
  summary.lots = [...new Set(summary.lots)].sort()
  return summary
}

/**
 * Judges again the runs whose write found the history changed after their judgement (see calibrationGuard), with
 * an audit row when any flag moved. Returns how many runs it took from the queue.
 */
export async function drainRejudgeQueue(db: Knex, limit = 500): Promise<number> {
  const queued = await queuedRejudges(db, limit)
  if (!queued.length) return 0
  return writeTransaction(db, async (trx) => {
    // a shared lock on the version row: no history change can commit while these runs are judged
    await shareLockHistoryVersion(trx)
    const ids = await claimRejudges(trx, queued)
    const summary = await rejudgeRuns(trx, await runsById(trx, ids))
    if (summary.relinked || summary.nowLapsed || summary.nowInCalibration) {
      await writeAudit(trx, { action: 'calibration_rejudge', entity: 'test_run', entityId: ids.length === 1 ? ids[0]! : `${ids[0]}…${ids[ids.length - 1]}`, after: { queued: ids.length, rejudged: summary } })
    }
    return ids.length
  })
}
