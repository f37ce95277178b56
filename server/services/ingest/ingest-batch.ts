import type { Knex } from 'knex'
import { databaseFaults } from '../../utils/database-faults'
import { validateRun } from '../../utils/run-validator'
import { loadRunsWithMeasurements } from '../../database/repositories/runs'
import { bodyHash } from './canonical'
import { freshRunView, prepare, replay, RunRejected, touchStation, type StationRef } from './ingest-run'
import { runViewFromRows, type RunView } from './run-view'
import { writeRuns, type RunToWrite } from './write-runs'

export type BatchItemResult =
  | { id: string | null; status: 200 | 201; run: RunView }
  | { id: string | null; status: number; detail: string; errors?: { pointer: string; message: string }[] }

const idOf = (item: unknown) => {
  const id = (item as { id?: unknown } | null)?.id
  return typeof id === 'string' ? id : null
}

/** A run the database could not take: 503 when it was away or busy (the station retries), else 500. */
export function failedItem(id: string | null, error: unknown): BatchItemResult {
  // a database fault goes to the fault log (once per outage); anything else is a fault of the code, reported in full
  const unavailable = databaseFaults.fault('batch-run', error)
  if (!unavailable) console.error(error)
  return { id, status: unavailable ? 503 : 500, detail: unavailable ? 'The database is unavailable; retry this run.' : 'This run could not be stored.' }
}

export type BatchOptions = {
  touchStation?: boolean
  receivedAt?: (run: RunToWrite) => Date | null
  /** pointers of errors are prefixed with /runs/<index> unless `false` (an import names the run's own fields) */
  prefixPointers?: boolean
}

/**
 * Answers a batch as the single endpoint would answer its runs, while writing every accepted run in one
 * transaction: schema errors and refusals are decided first, then the write places each run by test time.
 * A run the database refuses is written on its own afterwards, so it never takes the others down.
 */
export async function ingestBatch(db: Knex, station: StationRef, items: unknown[], now = new Date(), options: BatchOptions = {}): Promise<BatchItemResult[]> {
  const results: (BatchItemResult | undefined)[] = new Array(items.length)
  const prefix = (i: number, errs: { pointer: string; message: string }[]) => options.prefixPointers === false ? errs : errs.map((e) => ({ ...e, pointer: `/runs/${i}${e.pointer}` }))
  const toWrite: RunToWrite[] = []
  const indexOf: number[] = []
  const refusedFirst = new Map<number, { e: RunRejected; id: string; hash: string }>()
  // every run of the batch checks the caches against one counter read made after the batch arrived
  const at: StationRef = station.seenAt === undefined ? { ...station, seenAt: performance.now() } : station
  for (let i = 0; i < items.length; i++) {
    const v = validateRun(items[i])
    if (!v.ok) { results[i] = { id: idOf(items[i]), status: 400, detail: 'The run does not match the schema.', errors: prefix(i, v.errors) }; continue }
    const run = v.value
    const hash = bodyHash(run)
    try {
      const item: RunToWrite = { station, run, hash, ctx: await prepare(db, at, run, now) }
      item.receivedAt = options.receivedAt?.(item) ?? null
      toWrite.push(item)
      indexOf.push(i)
    } catch (e) {
      if (!(e instanceof RunRejected)) throw e
      refusedFirst.set(i, { e, id: run.id, hash })
    }
  }
  // a refused run whose id is stored with the same body is a replay, as on the single endpoint
  for (const [i, { e, id, hash }] of refusedFirst) {
    const again = await replay(db, id, hash)
    if (!again) results[i] = { id, status: 422, detail: e.message, errors: prefix(i, e.errors) }
    else results[i] = again.status === 409 ? { id, status: 409, detail: again.detail, errors: [] } : { id, status: 200, run: again.run }
  }

  const written = await writeRuns(db, toWrite)
  const replayIds: number[] = []
  written.forEach((w) => { if ('outcome' in w && w.outcome.kind === 'replay') replayIds.push(w.outcome.runId!) })
  const views = new Map<number, RunView>()
  for (const hit of await loadRunsWithMeasurements(db, [...new Set(replayIds)])) views.set(Number(hit.run.id), runViewFromRows(hit.run, hit.measurements))
  let stored = false
  written.forEach((w, k) => {
    const i = indexOf[k]!
    const { run, ctx } = toWrite[k]!
    if ('error' in w) { results[i] = failedItem(run.id, w.error); return }
    const o = w.outcome
    if (o.kind === 'stored') { stored = true; results[i] = { id: run.id, status: 201, run: freshRunView(station, run, ctx, o.attempt) } }
    else if (o.kind === 'replay') results[i] = { id: run.id, status: 200, run: views.get(o.runId!)! }
    else if (o.kind === 'conflict') results[i] = { id: run.id, status: 409, detail: o.detail, errors: [] }
    else results[i] = { id: run.id, status: 422, detail: o.detail, errors: prefix(i, o.errors) }
  })
  if (stored && options.touchStation !== false) touchStation(db, station.id, now)
  return results as BatchItemResult[]
}
