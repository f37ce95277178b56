// Writes a group of judged runs — one station post, many concurrent posts, a batch or a slice of an import — in one
// transaction of three round trips: lock the units and find replays; insert the runs; write everything that hangs
// off them and commit. A run placed before runs stored earlier adds one round trip for that unit's history.
import type { Knex } from 'knex'
import { isDatabaseUnavailable } from '../../utils/database-unavailable'
import { withWriteRetries } from '../../database/write-retries'
import { sendStatements, withDriverConnection, type SendStatements, type Statement } from '../../database/raw-connection'
import {
  dropUnitWithoutRuns, firstAttemptFlags, insertedRunIdsCheck, insertedRunRef, lockUnitsWithSteps, productStepsShared, rememberFirstRunId, measurementsInsert, pendingStatsInsert, renumberAttempts, runsInsert, statsRebuildMark,
  stepCountersAdd, storedAttempts, storedRunsByUuid, tracesInsert, unitStepsUpsert, unitsUpsert,
  type LockedUnitRow, type RunRef, type StoredAttemptRow, type StoredUuidRow,
} from '../../database/repositories/run-writes'
import { retestStatements } from '../../database/repositories/certificate-retests'
import { standingsWrite, unitCountersAdd } from '../../database/repositories/unit-standing'
import { batchCalibrationStatements } from '../calibration/run-links'
import { lockedUnits, placeRuns, rowsAfter, runRowFor, screen, unitsToLock, type LockedUnit, type RunToWrite, type WriteOutcome } from './write-plan'

export type { RunToWrite, WriteOutcome }

// keeps each measurement or trace statement well under max_allowed_packet
const MEASUREMENT_ROWS_PER_STATEMENT = 4000
const TRACE_BYTES_PER_STATEMENT = 2 * 1024 * 1024

function measurementStatements(items: Parameters<typeof measurementsInsert>[0]): Statement[] {
  const out: Statement[] = []
  let part: typeof items = []
  let rows = 0
  for (const it of items) {
    if (!it.ms.length) continue
    if (rows && rows + it.ms.length > MEASUREMENT_ROWS_PER_STATEMENT) { out.push(measurementsInsert(part)); part = []; rows = 0 }
    part.push(it)
    rows += it.ms.length
  }
  if (part.length) out.push(measurementsInsert(part))
  return out
}

function traceStatements(rows: { runId: RunRef; name: string; points: string }[]): Statement[] {
  const out: Statement[] = []
  let part: typeof rows = []
  let bytes = 0
  for (const r of rows) {
    if (part.length && bytes + r.points.length > TRACE_BYTES_PER_STATEMENT) { out.push(tracesInsert(part)); part = []; bytes = 0 }
    part.push(r)
    bytes += r.points.length
  }
  if (part.length) out.push(tracesInsert(part))
  return out
}

async function lockAndScreen(send: SendStatements, items: RunToWrite[]) {
  const plan = unitsToLock(items)
  // the products' steps first: a change of them takes the product row and then the units, in that order too
  const statements: (Statement | string)[] = ['START TRANSACTION', productStepsShared([...plan.keys()])]
  for (const [productId, p] of plan) statements.push(unitsUpsert(productId, p.serials), lockUnitsWithSteps(productId, p.serials.map((s) => s.serial)))
  statements.push(storedRunsByUuid([...new Set(items.map((i) => i.run.id))]))
  const results = await sendStatements(send, statements)
  const productSteps = new Map((results[1] as { id: number; steps: unknown }[]).map((r) => [Number(r.id), (Array.isArray(r.steps) ? r.steps : JSON.parse(String(r.steps))) as string[]]))
  const units = new Map<string, LockedUnit>()
  let k = 2
  for (const productId of plan.keys()) {
    lockedUnits(productId, results[k + 1] as LockedUnitRow[], units)
    k += 2
  }
  return { ...screen(items, units, results[k] as StoredUuidRow[]), productSteps }
}

/**
 * How the runs' ids reach the statements that hang off them: `inline` writes them as the insert's first id plus
 * k increments, checked in the same round trip, so the whole write is one round trip; `returning` reads them back
 * first (one more round trip), for when the check finds the ids were not one increment apart.
 */
export type IdMode = 'inline' | 'returning'

/** One transaction for the whole group; throws (after rolling back) when the database refuses any statement. */
export async function writeGroupOnce(db: Knex, items: RunToWrite[], mode: IdMode = 'inline'): Promise<WriteOutcome[]> {
  return withDriverConnection(db, async (send, discard) => {
    try {
      const screened = await lockAndScreen(send, items)
      const history = screened.needHistory.length ? (await sendStatements(send, [storedAttempts(screened.needHistory)]))[0] as StoredAttemptRow[] : []
      const plan = placeRuns(screened, history)
      // a run refused as a conflict may have created its unit above: a unit left without runs goes again
      const orphans = items.flatMap((it, i) => (plan.outcomes[i]?.kind === 'conflict' ? [screened.unitOf(it)] : []))
      if (!plan.steps.length) {
        await sendStatements(send, [...orphans.map(dropUnitWithoutRuns), 'COMMIT'])
        return plan.outcomes as WriteOutcome[]
      }

      const accepted = plan.steps.flatMap((s) => s.accepted.map((a) => ({ a, attempt: s.plan.attempts.get(a.index)! })))
      const rows = accepted.map(({ a, attempt }) => runRowFor(a.item, a.unit.id, attempt))
      const renumber = plan.steps.flatMap((s) => s.plan.renumber)
      const head: (Statement | string)[] = renumber.length ? [renumberAttempts(renumber)] : []

      const refs = new Map<number, RunRef>()
      let firstRunId: (results: unknown[]) => { first: number; inc: number }
      if (mode === 'returning') {
        const inserted = (await sendStatements(send, [...head, runsInsert(rows)])).at(-1) as { id: number; uuid: string }[]
        const idByUuid = new Map(inserted.map((r) => [r.uuid, Number(r.id)]))
        for (const { a } of accepted) refs.set(a.index, idByUuid.get(a.item.run.id)!)
        head.length = 0
        firstRunId = () => ({ first: 0, inc: 0 })
      } else {
        accepted.forEach(({ a }, k) => refs.set(a.index, insertedRunRef(k)))
        head.push(runsInsert(rows, false), rememberFirstRunId, insertedRunIdsCheck(rows.map((r) => r.uuid)))
        const checkAt = head.length - 1
        firstRunId = (results) => { const [row] = results[checkAt] as { first: number; inc: number }[]; return { first: Number(row!.first), inc: Number(row!.inc) } }
      }

      // a new run's id follows every stored one, in insert order
      const rank = new Map(accepted.map(({ a }, k) => [a.index, typeof refs.get(a.index) === 'number' ? refs.get(a.index) as number : 2 ** 52 + k]))
      const after = rowsAfter(plan, refs, (index) => rank.get(index)!, screened.productSteps)
      const writes: (Statement | string)[] = [
        ...head,
        ...traceStatements(accepted.flatMap(({ a }) => (a.item.run.traces ?? []).map((t) => ({ runId: refs.get(a.index)!, name: t.name, points: JSON.stringify(t.points) })))),
      ]
      if (after.demoted.length) writes.push(firstAttemptFlags(after.demoted, false))
      if (after.promoted.length) writes.push(firstAttemptFlags(after.promoted, true))
      writes.push(unitStepsUpsert(after.unitSteps), stepCountersAdd(after.counters))
      // each written unit's standing, and the lot counters moved by the difference (services/ingest/unit-standing.ts)
      writes.push(standingsWrite(after.standings), unitCountersAdd(after.unitCounters))
      writes.push(pendingStatsInsert(accepted.map(({ a }) => ({ runId: refs.get(a.index)!, lotId: a.item.ctx.lotId }))))
      // the instruments each run was taken with, and the guard that sends a run back for judging when the calibration
      // history changed after it was judged (services/calibration/run-links)
      writes.push(...batchCalibrationStatements(accepted.map(({ a }) => ({ runId: refs.get(a.index)!, calibration: a.item.ctx.calibration }))))
      if (after.rebuild.length) writes.push(statsRebuildMark(after.rebuild))
      // a certified unit's new latest result at a step: a failure revokes its certificate at once
      writes.push(...retestStatements(after.retests))
      writes.push(...orphans.map(dropUnitWithoutRuns))
      // the measurements, written as literals, come last: the driver stops reading the text for placeholders once
      // the statements before have had their values
      writes.push(...measurementStatements(accepted.map(({ a, attempt }) => ({
        ctx: { runId: refs.get(a.index)!, lotId: a.item.ctx.lotId, stationId: a.item.station.id, revisionId: a.item.ctx.revision.id, step: a.item.run.step, firstAttempt: attempt === 1, startedAt: a.item.ctx.startedAt },
        ms: a.item.ctx.judged.measurements,
      }))), 'COMMIT')
      const results = await sendStatements(send, writes)

      const { first, inc } = firstRunId(results)
      accepted.forEach(({ a, attempt }, k) => {
        const ref = refs.get(a.index)!
        plan.outcomes[a.index] = { kind: 'stored', attempt, runId: typeof ref === 'number' ? ref : first + k * inc }
      })
      // a repeat of a run stored earlier in this group answers with that run
      for (const o of plan.outcomes) if (o?.kind === 'replay' && o.sameAs !== undefined) o.runId = (plan.outcomes[o.sameAs] as { runId: number }).runId
      return plan.outcomes as WriteOutcome[]
    } catch (e) {
      // nothing of the group stays: whatever ran before the failing statement is undone
      await send('ROLLBACK').catch(discard)
      throw e
    }
  })
}

/**
 * A concurrent writer took the same unit or id first, or the cluster refused the commit: the group may be tried again
 * (a deadlock or certification failure as every write transaction; here also a lock wait that ran out and a concurrent
 * insert of the same run id, which the next attempt finds stored and answers as a replay).
 */
const ALSO_RETRY = ['ER_LOCK_WAIT_TIMEOUT', 'ER_DUP_ENTRY'] as const

const withRetries = <T>(work: () => Promise<T>) => withWriteRetries(work, { alsoRetry: ALSO_RETRY })

export type GroupResult = { outcome: WriteOutcome } | { error: unknown }

/** The check of inlined run ids failed: another insert's ids came between this group's (interleaved auto-increment). */
const IDS_NOT_CONSECUTIVE = 'ER_SUBQUERY_NO_1_ROW'

/** The group in one write round trip, or, when its ids turned out not to be one increment apart, with its ids read back. */
async function writeGroup(db: Knex, items: RunToWrite[]): Promise<WriteOutcome[]> {
  try {
    return await writeGroupOnce(db, items, 'inline')
  } catch (e) {
    if ((e as { code?: string })?.code !== IDS_NOT_CONSECUTIVE) throw e
    return writeGroupOnce(db, items, 'returning')
  }
}

/**
 * Writes the group, retrying what a concurrent writer made fail. If the group still fails, each run is written on
 * its own, so one run the database refuses never takes the others down: every run gets its own result.
 */
export async function writeRuns(db: Knex, items: RunToWrite[]): Promise<GroupResult[]> {
  if (!items.length) return []
  try {
    return (await withRetries(() => writeGroup(db, items))).map((outcome) => ({ outcome }))
  } catch (e) {
    // with the database away, writing each run on its own would only fail again, once per run
    if (items.length === 1 || isDatabaseUnavailable(e)) return items.map(() => ({ error: e }))
  }
  const out: GroupResult[] = []
  for (const item of items) {
    try {
      const [outcome] = await withRetries(() => writeGroup(db, [item]))
      out.push({ outcome: outcome! })
    } catch (error) {
      out.push({ error })
    }
  }
  return out
}
