import type { Knex } from 'knex'
import type { StationRun } from '../../utils/run-validator'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type RevisionInForce } from '../../database/repositories/spec-lookup'
import { findRunHashByUuid, loadRunsWithMeasurements } from '../../database/repositories/runs'
import { ensureFoldLease } from '../../database/repositories/fold-leases'
import { createLot, findLot, lotCodeOfSerial } from '../../database/repositories/lots'
import { GroupWriter } from '../../utils/group-writer'
import { writeRuns, type GroupResult, type RunToWrite } from './write-runs'
import { lotCache, productCache, specCache } from './caches'
import { cacheVersions } from '../cache-versions'
import type { CacheVersions } from '../../database/repositories/cache-versions'
import { calibrationAt } from '../calibration/in-force'
import { bodyHash } from './canonical'
import { judgeRun, RunRejected } from './judge-run'
import { measurementView, qualifierFields, runViewFromRows, type RunView } from './run-view'

export { RunRejected }

export type IngestOutcome =
  | { status: 201 | 200; run: RunView }
  | { status: 409; detail: string }

/** `seenAt`: when the request that carried the run arrived (performance.now()), so its cache check may share the token check's counter read. */
export type StationRef = { id: number; name: string; seenAt?: number }

const FUTURE_SLACK_MS = 5 * 60_000

function productFor(db: Knex, partNumber: string, v: CacheVersions) {
  return productCache.get(partNumber, v.catalogue, () => findProductByPart(db, partNumber)) as Promise<ProductInfo | undefined>
}

function revisionsFor(db: Knex, productId: number, v: CacheVersions) {
  return specCache.get(productId, v.catalogue, () => listEffectiveRevisions(db, productId)) as Promise<RevisionInForce[]>
}

/**
 * The run's lot, created on first sight. Only a run that can be stored creates one, so that a refusal leaves nothing
 * behind: the checks that can refuse run before this, and a serial already recorded in another lot (which the write
 * plan would refuse) is refused here first.
 */
async function lotFor(db: Knex, run: StationRun, product: ProductInfo, v: CacheVersions): Promise<number> {
  const code = run.lot
  const lot = await lotCache.get(code, v.lots, async () => {
    const existing = await findLot(db, code)
    if (existing) return existing
    const elsewhere = await lotCodeOfSerial(db, product.id, run.serial)
    if (elsewhere !== undefined) throw new RunRejected(`Serial ${run.serial} is recorded in another lot.`, [{ pointer: '/lot', message: 'the serial belongs to another lot' }])
    const created = await createLot(db, code, product.id)
    await ensureFoldLease(db, created.id)
    return created
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

/**
 * Everything decided before the transaction: times, product, revision in force, judgement, lot, calibration. The
 * cached product, limits and lot are checked against the counters read after the request arrived (`station.seenAt`),
 * so a change committed through any instance before then is seen.
 */
export async function prepare(db: Knex, station: StationRef, run: StationRun, now: Date) {
  const { startedAt, finishedAt } = checkTimes(run, now)
  const versions = await cacheVersions(db, station.seenAt)
  const product = await productFor(db, run.partNumber, versions)
  if (!product) throw new RunRejected(`Unknown part number ${run.partNumber}.`, [{ pointer: '/partNumber', message: 'unknown part number' }])
  const revision = revisionAt(await revisionsFor(db, product.id, versions), startedAt)
  if (!revision) throw new RunRejected(`No approved specification of ${product.partNumber} was in force at ${startedAt.toISOString()}.`, [{ pointer: '/startedAt', message: 'no approved specification in force' }])
  const judged = judgeRun(run, product, revision)
  // calibration hook: the instruments in force at the test time and their records (services/calibration/in-force)
  const calibration = await calibrationAt(db, station.id, startedAt, run.instrumentAssets)
  const lotId = await lotFor(db, run, product, versions)
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

/** `touchStation: false` for runs that are history (imports, seeds): the station was not seen now. */
export type IngestOptions = { touchStation?: boolean; receivedAt?: Date }

// Concurrent posts are written together: 4 groups in flight of up to 32 runs each. On the 2-core box 3 and 4 groups
// stored the most runs per second (bench:ingest, two runs each); 6 and 12 spent more per run on smaller groups.
// Per process: with several instances on one database each has its own lanes, so the database sees up to
// instances × TERCET_WRITE_LANES write transactions at once (set it lower per instance to keep the same total).
const LANES = Number(process.env.TERCET_WRITE_LANES || 4)
const MAX_GROUP = Number(process.env.TERCET_WRITE_GROUP || 32)
const writers = new WeakMap<Knex, GroupWriter<RunToWrite, GroupResult>>()

function writerFor(db: Knex): GroupWriter<RunToWrite, GroupResult> {
  let w = writers.get(db)
  if (!w) { w = new GroupWriter((items) => writeRuns(db, items), LANES, MAX_GROUP); writers.set(db, w) }
  return w
}

/**
 * Stores one validated run: judged against the revision in force at its start, placed among the unit's runs at
 * its step by test time, written with whatever other posts arrive at the same moment. Same id and body again → 200.
 * Answers only once the run is committed.
 */
export async function ingestRun(db: Knex, station: StationRef, run: StationRun, now = new Date(), options: IngestOptions = {}): Promise<IngestOutcome> {
  const hash = bodyHash(run)
  let ctx: Prepared
  try {
    ctx = await prepare(db, station, run, now)
  } catch (e) {
    // a stored run posted again is answered as stored, even if it would no longer be accepted today
    if (e instanceof RunRejected) { const again = await replay(db, run.id, hash); if (again) return again }
    throw e
  }
  const result = await writerFor(db).submit({ station, run, hash, ctx, receivedAt: options.receivedAt ?? null })
  if ('error' in result) throw result.error
  const o = result.outcome
  switch (o.kind) {
    case 'stored':
      if (options.touchStation !== false) touchStation(db, station.id, now)
      return { status: 201, run: freshRunView(station, run, ctx, o.attempt) }
    case 'replay': return { status: 200, run: await loadRunView(db, o.runId!) }
    case 'conflict': return { status: 409, detail: o.detail }
    case 'refused': throw new RunRejected(o.detail, o.errors)
  }
}

const lastTouch = new Map<number, number>()
/** last_seen_at moves at most every 5 s per station, outside the run's transaction. */
export function touchStation(db: Knex, stationId: number, now: Date): void {
  const prev = lastTouch.get(stationId) ?? 0
  if (now.getTime() - prev < 5000) return
  lastTouch.set(stationId, now.getTime())
  db('stations').where({ id: stationId }).update({ last_seen_at: now }).catch(() => lastTouch.delete(stationId))
}
