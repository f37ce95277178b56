import type { Knex } from 'knex'
import { validateRun, type StationRun } from '../../utils/run-validator'
import { measurementsInsertMany, pendingStatsInsert, runsInsertMany, unitStepsUpsertMany } from '../../database/repositories/runs'
import { bodyHash } from './canonical'
import { freshRunView, loadRunView, prepare, RunRejected, runRowFor, touchStation, type Prepared, type StationRef } from './ingest-run'
import { isStored, postRun, type PostResult } from './post-run'
import { stepStatsStatementMany, stepStatsValues } from './aggregates'
import { batchCalibrationStatements } from '../calibration/run-links'
import type { RunView } from './run-view'

export type BatchItemResult =
  | { id: string | null; status: 200 | 201; run: RunView }
  | { id: string | null; status: number; detail: string; errors?: { pointer: string; message: string }[] }

type Accepted = {
  index: number; run: StationRun; hash: string; ctx: Prepared
  unitId?: number; attempt?: number; previousLatest?: 'pass' | 'fail' | null; runId?: number; view?: RunView
}

// keeps each statement well under max_allowed_packet
const MEASUREMENT_ROWS_PER_STATEMENT = 4000
const TRACE_BYTES_PER_STATEMENT = 2 * 1024 * 1024

const idOf = (item: unknown) => {
  const id = (item as { id?: unknown } | null)?.id
  return typeof id === 'string' ? id : null
}

function toItem(item: unknown, r: PostResult): BatchItemResult {
  const id = idOf(item)
  return isStored(r) ? { id, status: r.status, run: r.run } : { id, status: r.status, detail: r.detail, errors: r.errors ?? [] }
}

/** One run after another, each in its own transaction: the reference behaviour, and the path when the batch write races. */
export async function postSequentially(db: Knex, station: StationRef, items: unknown[]): Promise<BatchItemResult[]> {
  const results: BatchItemResult[] = []
  for (let i = 0; i < items.length; i++) {
    const item = items[i]
    try {
      results.push(toItem(item, await postRun(db, station, item, `/runs/${i}`)))
    } catch (e: any) {
      const unavailable = ['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ETIMEDOUT'].includes(e?.code)
      if (!unavailable) console.error(e)
      results.push({ id: idOf(item), status: unavailable ? 503 : 500, detail: unavailable ? 'The database is unavailable; retry this run.' : 'This run could not be stored.' })
    }
  }
  return results
}

let autoincMode: Promise<{ mode: number; increment: number }> | undefined
function autoincrement(db: Knex) {
  autoincMode ??= db.raw('SELECT @@innodb_autoinc_lock_mode AS mode, @@auto_increment_increment AS inc').then(([rows]: any) => ({ mode: Number(rows[0].mode), increment: Number(rows[0].inc) }))
  autoincMode.catch(() => { autoincMode = undefined })
  return autoincMode
}

function chunks<T>(xs: T[], size: number): T[][] {
  const out: T[][] = []
  for (let i = 0; i < xs.length; i += size) out.push(xs.slice(i, i + size))
  return out
}

const unitKey = (productId: number, serial: string) => `${productId}\u0000${serial}`

/**
 * A batch of runs with the answers the single endpoint would give one after another, but the accepted runs
 * written together: every refusal and replay decided before the one transaction that stores the rest.
 */
export async function ingestBatch(db: Knex, station: StationRef, items: unknown[], now = new Date()): Promise<BatchItemResult[]> {
  let plan: Awaited<ReturnType<typeof planBatch>>
  try {
    plan = await planBatch(db, station, items, now)
  } catch {
    return postSequentially(db, station, items)
  }
  const { results, accepted, replays } = plan
  if (accepted.length) {
    try {
      await writeBatch(db, station, accepted)
    } catch (e: any) {
      // a concurrent post took one of the ids or units first, or the write failed: each run on its own then
      if (!['ER_DUP_ENTRY', 'ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT', 'BATCH_UNIT_MOVED'].includes(e?.code)) console.error(e)
      return postSequentially(db, station, items)
    }
    touchStation(db, station.id, now)
  }
  for (const a of accepted) results[a.index] = { id: a.run.id, status: 201, run: a.view! }
  for (const [index, of] of replays) results[index] = { id: of.run.id, status: 200, run: of.view! }
  return results as BatchItemResult[]
}

async function planBatch(db: Knex, station: StationRef, items: unknown[], now: Date) {
  const results: (BatchItemResult | undefined)[] = new Array(items.length)
  type Candidate = { index: number; run: StationRun; hash: string; ctx?: Prepared; rejected?: RunRejected }
  const candidates: Candidate[] = []
  const prefix = (i: number, errs: { pointer: string; message: string }[]) => errs.map((e) => ({ ...e, pointer: `/runs/${i}${e.pointer}` }))

  for (let i = 0; i < items.length; i++) {
    const v = validateRun(items[i])
    if (!v.ok) { results[i] = { id: idOf(items[i]), status: 400, detail: 'The run does not match the schema.', errors: prefix(i, v.errors) }; continue }
    const run = v.value
    const hash = bodyHash(run)
    try {
      candidates.push({ index: i, run, hash, ctx: await prepare(db, station, run, now) })
    } catch (e) {
      if (!(e instanceof RunRejected)) throw e
      candidates.push({ index: i, run, hash, rejected: e })
    }
  }

  const stored = new Map<string, { id: number; hash: string }>()
  const uuids = [...new Set(candidates.map((c) => c.run.id))]
  for (const part of chunks(uuids, 1000)) {
    const rows = await db('test_runs').whereIn('uuid', part).select('id', 'uuid', 'body_hash')
    for (const r of rows) stored.set(r.uuid, { id: Number(r.id), hash: r.body_hash })
  }

  const unitLot = new Map<string, number>()
  const serialsByProduct = new Map<number, Set<string>>()
  for (const c of candidates) {
    if (!c.ctx) continue
    const set = serialsByProduct.get(c.ctx.product.id) ?? new Set<string>()
    set.add(c.run.serial)
    serialsByProduct.set(c.ctx.product.id, set)
  }
  for (const [productId, serials] of serialsByProduct) {
    for (const part of chunks([...serials], 1000)) {
      const rows = await db('units').where({ product_id: productId }).whereIn('serial', part).select('serial', 'lot_id')
      for (const r of rows) unitLot.set(unitKey(productId, r.serial), Number(r.lot_id))
    }
  }

  const accepted: Accepted[] = []
  const acceptedById = new Map<string, Accepted>()
  const replays = new Map<number, Accepted>()
  const conflict = (c: Candidate): BatchItemResult => ({ id: c.run.id, status: 409, detail: `Run ${c.run.id} was already stored with a different body.`, errors: [] })
  const answerReplay = async (c: Candidate): Promise<boolean> => {
    const before = stored.get(c.run.id)
    if (before) {
      results[c.index] = before.hash === c.hash ? { id: c.run.id, status: 200, run: await loadRunView(db, before.id) } : conflict(c)
      return true
    }
    const earlier = acceptedById.get(c.run.id)
    if (!earlier) return false
    if (earlier.hash === c.hash) replays.set(c.index, earlier)
    else results[c.index] = conflict(c)
    return true
  }

  // in batch order, as if each earlier accepted run were already stored
  for (const c of candidates) {
    if (!c.ctx) {
      if (!(await answerReplay(c))) results[c.index] = { id: c.run.id, status: 422, detail: c.rejected!.message, errors: prefix(c.index, c.rejected!.errors) }
      continue
    }
    const key = unitKey(c.ctx.product.id, c.run.serial)
    const lot = unitLot.get(key)
    if (lot !== undefined && lot !== c.ctx.lotId) {
      results[c.index] = { id: c.run.id, status: 422, detail: `Serial ${c.run.serial} is recorded in another lot.`, errors: prefix(c.index, [{ pointer: '/lot', message: 'the serial belongs to another lot' }]) }
      continue
    }
    if (await answerReplay(c)) continue
    if (lot === undefined) unitLot.set(key, c.ctx.lotId)
    const a: Accepted = { index: c.index, run: c.run, hash: c.hash, ctx: c.ctx }
    accepted.push(a)
    acceptedById.set(c.run.id, a)
  }
  return { results, accepted, replays }
}

async function writeBatch(db: Knex, station: StationRef, accepted: Accepted[]): Promise<void> {
  const { mode, increment } = await autoincrement(db)
  await db.transaction(async (trx) => {
    // units: created on first sight, then every unit of the batch locked, in serial order
    const byProduct = new Map<number, Map<string, number>>()
    for (const a of accepted) {
      const units = byProduct.get(a.ctx.product.id) ?? new Map<string, number>()
      if (!units.has(a.run.serial)) units.set(a.run.serial, a.ctx.lotId)
      byProduct.set(a.ctx.product.id, units)
    }
    const unitIds = new Map<string, number>()
    for (const [productId, units] of byProduct) {
      const serials = [...units.keys()].sort()
      await trx.raw(`INSERT IGNORE INTO units (product_id, lot_id, serial) VALUES ${serials.map(() => '(?, ?, ?)').join(', ')}`,
        serials.flatMap((s) => [productId, units.get(s)!, s]))
      const [rows] = await trx.raw(`SELECT id, serial, lot_id FROM units WHERE product_id = ? AND serial IN (${serials.map(() => '?').join(', ')}) ORDER BY serial FOR UPDATE`, [productId, ...serials])
      for (const r of rows as { id: number; serial: string; lot_id: number }[]) {
        if (Number(r.lot_id) !== units.get(r.serial)) throw Object.assign(new Error(`unit ${r.serial} is in another lot`), { code: 'BATCH_UNIT_MOVED' })
        unitIds.set(unitKey(productId, r.serial), Number(r.id))
      }
    }
    for (const a of accepted) a.unitId = unitIds.get(unitKey(a.ctx.product.id, a.run.serial))!

    // attempts numbered in batch order, from what the units had before
    const ids = [...new Set(accepted.map((a) => a.unitId!))]
    const [prevRows] = await trx.raw(`SELECT unit_id, step, attempts, latest_verdict FROM unit_steps WHERE unit_id IN (${ids.map(() => '?').join(', ')})`, ids)
    const steps = new Map<string, { attempts: number; latest: 'pass' | 'fail' }>()
    for (const r of prevRows as any[]) steps.set(`${r.unit_id}\u0000${r.step}`, { attempts: Number(r.attempts), latest: r.latest_verdict })
    for (const a of accepted) {
      const key = `${a.unitId}\u0000${a.run.step}`
      const prev = steps.get(key)
      a.attempt = (prev?.attempts ?? 0) + 1
      a.previousLatest = prev?.latest ?? null
      steps.set(key, { attempts: a.attempt, latest: a.ctx.judged.verdict })
    }

    const ins = runsInsertMany(accepted.map((a) => runRowFor(station, a.run, a.hash, a.ctx, a.unitId!, a.attempt!)))
    const [res] = await trx.raw(ins.sql, ins.values)
    if (mode !== 2 && Number(res.affectedRows) === accepted.length) {
      // a multi-row insert gets consecutive ids unless the lock mode is interleaved
      accepted.forEach((a, i) => { a.runId = Number(res.insertId) + i * increment })
    } else {
      const byUuid = new Map<string, number>()
      for (const part of chunks(accepted.map((a) => a.run.id), 1000)) {
        for (const r of await trx('test_runs').whereIn('uuid', part).select('id', 'uuid')) byUuid.set(r.uuid, Number(r.id))
      }
      for (const a of accepted) a.runId = byUuid.get(a.run.id)!
    }

    const agg = (a: Accepted) => ({ lotId: a.ctx.lotId, stationId: station.id, step: a.run.step, attempt: a.attempt!, startedAt: a.ctx.startedAt })

    let batch: Accepted[] = []
    let rows = 0
    const flushMeasurements = async () => {
      if (!rows) return
      const st = measurementsInsertMany(batch.map((a) => ({ runId: a.runId!, ctx: { ...agg(a), firstAttempt: a.attempt === 1 }, ms: a.ctx.judged.measurements })))
      await trx.raw(st.sql, st.values)
      batch = []
      rows = 0
    }
    for (const a of accepted) {
      const n = a.ctx.judged.measurements.length
      if (rows && rows + n > MEASUREMENT_ROWS_PER_STATEMENT) await flushMeasurements()
      batch.push(a)
      rows += n
    }
    await flushMeasurements()

    let traces: { run_id: number; name: string; points: string }[] = []
    let bytes = 0
    for (const a of accepted) {
      for (const t of a.run.traces ?? []) {
        const points = JSON.stringify(t.points)
        if (traces.length && bytes + points.length > TRACE_BYTES_PER_STATEMENT) { await trx('traces').insert(traces); traces = []; bytes = 0 }
        traces.push({ run_id: a.runId!, name: t.name, points })
        bytes += points.length
      }
    }
    if (traces.length) await trx('traces').insert(traces)

    const us = unitStepsUpsertMany(accepted.map((a) => ({ unitId: a.unitId!, step: a.run.step, attempt: a.attempt!, verdict: a.ctx.judged.verdict, runId: a.runId! })))
    await trx.raw(us.sql, us.values)

    const st = stepStatsStatementMany(accepted.map((a) => stepStatsValues(agg(a), a.ctx.judged.verdict, a.previousLatest!)))
    await trx.raw(st.sql, st.values)

    const pending = pendingStatsInsert(accepted.map((a) => ({ runId: a.runId!, lotId: a.ctx.lotId })))
    await trx.raw(pending.sql, pending.values)

    // calibration hook: instrument links and the history-version guard (services/calibration/run-links)
    for (const c of batchCalibrationStatements(accepted.map((a) => ({ runId: a.runId!, calibration: a.ctx.calibration })))) await trx.raw(c.sql, c.values as any[])
  })
  for (const a of accepted) a.view = freshRunView(station, a.run, a.ctx, a.attempt!)
}
