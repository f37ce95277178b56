import type { Knex } from 'knex'
import type { StationRun } from '../../utils/run-validator'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type RevisionInForce } from '../../database/repositories/spec-lookup'
import { findRunHashByUuid, loadRunsWithMeasurements, type RunRow } from '../../database/repositories/runs'
import { joinStatements, withDriverConnection } from '../../database/raw-connection'
import { FifoGate } from '../../utils/fifo-gate'
import { lockedUnit, runWriteStatements, unitLockStatements } from './run-statements'
import { lotCache, productCache, specCache } from './caches'
import { calibrationAt } from '../calibration/in-force'
import { bodyHash } from './canonical'
import { judgeRun, RunRejected } from './judge-run'
import { measurementView, qualifierFields, runViewFromRows, type RunView } from './run-view'

export { RunRejected }

export type IngestOutcome =
  | { status: 201 | 200; run: RunView }
  | { status: 409; detail: string }

export type StationRef = { id: number; name: string }

const FUTURE_SLACK_MS = 5 * 60_000

function productFor(db: Knex, partNumber: string) {
  return productCache.get(partNumber, () => findProductByPart(db, partNumber)) as Promise<ProductInfo | undefined>
}

function revisionsFor(db: Knex, productId: number) {
  return specCache.get(productId, () => listEffectiveRevisions(db, productId)) as Promise<RevisionInForce[]>
}

async function lotFor(db: Knex, code: string, product: ProductInfo): Promise<number> {
  const lot = await lotCache.get(code, async () => {
    let row = await db('lots').where({ code }).first('id', 'product_id')
    if (!row) {
      await db.raw('INSERT IGNORE INTO lots (product_id, code) VALUES (?, ?)', [product.id, code])
      row = await db('lots').where({ code }).first('id', 'product_id')
    }
    return { id: row.id as number, productId: row.product_id as number }
  }) as { id: number; productId: number }
  if (lot.productId !== product.id) {
    throw new RunRejected(`Lot ${code} belongs to another part number.`, [{ pointer: '/lot', message: 'lot belongs to another part' }])
  }
  return lot.id
}

export async function loadRunView(db: Knex, runId: number): Promise<RunView> {
  const [hit] = await loadRunsWithMeasurements(db, [runId])
  return runViewFromRows(hit!.run, hit!.measurements)
}

export async function replay(db: Knex, uuid: string, hash: string): Promise<IngestOutcome | undefined> {
  const existing = await findRunHashByUuid(db, uuid)
  if (!existing) return undefined
  if (existing.bodyHash !== hash) return { status: 409, detail: `Run ${uuid} was already stored with a different body.` }
  return { status: 200, run: await loadRunView(db, existing.id) }
}

function checkTimes(run: StationRun, now: Date): { startedAt: Date; finishedAt: Date } {
  const startedAt = new Date(run.startedAt)
  const finishedAt = new Date(run.finishedAt)
  if (finishedAt < startedAt) throw new RunRejected('finishedAt is before startedAt.', [{ pointer: '/finishedAt', message: 'must not be before startedAt' }])
  if (finishedAt.getTime() > now.getTime() + FUTURE_SLACK_MS) throw new RunRejected('finishedAt lies more than 5 minutes in the future.', [{ pointer: '/finishedAt', message: 'in the future' }])
  return { startedAt, finishedAt }
}

export type Prepared = Awaited<ReturnType<typeof prepare>>

/** Everything decided before the transaction: times, product, revision in force, judgement, lot, calibration. */
export async function prepare(db: Knex, station: StationRef, run: StationRun, now: Date) {
  const { startedAt, finishedAt } = checkTimes(run, now)
  const product = await productFor(db, run.partNumber)
  if (!product) throw new RunRejected(`Unknown part number ${run.partNumber}.`, [{ pointer: '/partNumber', message: 'unknown part number' }])
  const revision = revisionAt(await revisionsFor(db, product.id), startedAt)
  if (!revision) throw new RunRejected(`No approved specification of ${product.partNumber} was in force at ${startedAt.toISOString()}.`, [{ pointer: '/startedAt', message: 'no approved specification in force' }])
  const judged = judgeRun(run, product, revision)
  const lotId = await lotFor(db, run.lot, product)
  // calibration hook: the instruments in force at the test time and their records (services/calibration/in-force)
  const calibration = await calibrationAt(db, station.id, startedAt, run.instrumentAssets)
  const calibrationLapsed = calibration.lapsed
  return { startedAt, finishedAt, product, revision, judged, lotId, calibrationLapsed, calibration }
}

/** The answer for a run just stored, built from what was judged rather than read back. */
export function freshRunView(station: StationRef, run: StationRun, ctx: Prepared, attempt: number): RunView {
  const { startedAt, finishedAt, product, revision, judged, calibrationLapsed } = ctx
  return {
    id: run.id, serial: run.serial, partNumber: product.partNumber, lot: run.lot, step: run.step, attempt, station: station.name,
    startedAt: startedAt.toISOString(), finishedAt: finishedAt.toISOString(), verdict: judged.verdict,
    stationVerdict: run.stationVerdict ?? null, verdictDisagrees: !!run.stationVerdict && run.stationVerdict !== judged.verdict,
    incomplete: judged.missingRequired.length > 0,
    missingRequired: judged.missingRequired.map((m) => ({ name: m.name, ...qualifierFields(m.name, m.qualifier) })),
    calibrationLapsed, measurementIssue: judged.measurementIssue, revision: revision.revision,
    measurements: judged.measurements.map(measurementView),
  }
}

export function runRowFor(station: StationRef, run: StationRun, hash: string, ctx: Prepared, unitId: number, attempt: number): RunRow {
  const { startedAt, finishedAt, revision, judged, lotId, calibrationLapsed } = ctx
  return {
    uuid: run.id, bodyHash: hash, unitId, lotId, stationId: station.id, revisionId: revision.id, step: run.step, attempt,
    startedAt, finishedAt, operator: run.operator ?? null, softwareSequence: run.software?.sequence ?? null,
    softwareVersion: run.software?.version ?? null, temperatureC: run.conditions?.temperatureC ?? null,
    supplyV: run.conditions?.supplyV ?? null, stationVerdict: run.stationVerdict ?? null, serverVerdict: judged.verdict,
    verdictDisagrees: !!run.stationVerdict && run.stationVerdict !== judged.verdict, missingRequired: judged.missingRequired,
    calibrationLapsed, measurementIssue: judged.measurementIssue, reference: run.reference ?? null,
  }
}

const RETRYABLE = new Set(['ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT'])

/**
 * Stores one validated run: judged against the revision in force at its start, with the unit, attempt,
 * measurements, traces and lot aggregates written in one transaction. Same id and body again → 200.
 */
/** `touchStation: false` for runs that are history (imports, seeds): the station was not seen now. */
export type IngestOptions = { touchStation?: boolean }

export async function ingestRun(db: Knex, station: StationRef, run: StationRun, now = new Date(), options: IngestOptions = {}): Promise<IngestOutcome> {
  const hash = bodyHash(run)
  // a replay is found by the unique id when the insert collides; the first post pays no extra look-up
  let ctx: Prepared
  try {
    ctx = await prepare(db, station, run, now)
  } catch (e) {
    // a stored run posted again is answered as stored, even if it would no longer be accepted today
    if (e instanceof RunRejected) { const again = await replay(db, run.id, hash); if (again) return again }
    throw e
  }

  for (let tries = 0; ; tries++) {
    try {
      const attempt = await storeRun(db, station, run, hash, ctx)
      if (options.touchStation !== false) touchStation(db, station.id, now)
      return { status: 201, run: freshRunView(station, run, ctx, attempt) }
    } catch (e: any) {
      if (e?.code === 'ER_DUP_ENTRY') {
        // the same id posted before (a replay), or a concurrent post of the same unit's attempt
        const again = await replay(db, run.id, hash)
        if (again) return again
        if (tries < 3) continue
      }
      if (RETRYABLE.has(e?.code) && tries < 3) continue
      throw e
    }
  }
}

// 16 measured best on the 2-core box (bench:ingest with 8, 12, 16 and 32 slots)
const writers = new FifoGate(Number(process.env.TERCET_INGEST_WRITERS || 16))

/**
 * One transaction in two round trips, in one of the process's write slots: the first creates or locks the unit and
 * reads its attempts at the step, the second writes the run and its rows (see run-statements) and commits.
 * Returns the attempt number given to the run.
 */
async function storeRun(db: Knex, station: StationRef, run: StationRun, hash: string, ctx: Prepared): Promise<number> {
  return writers.run(() => withDriverConnection(db, async (send, discard) => {
    try {
      const lock = joinStatements(['START TRANSACTION', unitLockStatements(ctx.product.id, ctx.lotId, run.serial, run.step)])
      const unit = lockedUnit(await send(lock.sql, lock.values))
      if (unit.lotId !== ctx.lotId) {
        throw new RunRejected(`Serial ${run.serial} is recorded in another lot.`, [{ pointer: '/lot', message: 'the serial belongs to another lot' }])
      }
      const attempt = unit.attempts + 1
      const write = joinStatements([runWriteStatements({
        row: runRowFor(station, run, hash, ctx, unit.id, attempt), measurements: ctx.judged.measurements,
        traces: run.traces ?? [], previousLatest: unit.latestVerdict, calibration: ctx.calibration, // calibration hook
      }), 'COMMIT'])
      await send(write.sql, write.values)
      return attempt
    } catch (e) {
      // nothing of the run stays: whatever ran before the failing statement is undone
      await send('ROLLBACK').catch(discard)
      throw e
    }
  }))
}

const lastTouch = new Map<number, number>()
/** last_seen_at moves at most every 5 s per station, outside the run's transaction. */
export function touchStation(db: Knex, stationId: number, now: Date): void {
  const prev = lastTouch.get(stationId) ?? 0
  if (now.getTime() - prev < 5000) return
  lastTouch.set(stationId, now.getTime())
  db('stations').where({ id: stationId }).update({ last_seen_at: now }).catch(() => lastTouch.delete(stationId))
}
