// Historical import of test runs from a file. The upload is stored in the database in slices as it arrives while
// every line is checked (import-upload.ts); a file failing those checks is refused whole before any run is written.
// The runs are then read back from the stored slices and written in slices through the station batch endpoint's own
// ingestBatch, so validation, judging, test-time order and idempotency are exactly the station's. The instance
// holding the job's lease does the work; when it dies, another (or the restarted one) carries on after the job's
// line cursor (import-resume.ts).
import { createHash, randomUUID } from 'node:crypto'
import type { Readable } from 'node:stream'
import type { Knex } from 'knex'
import type { ImportJob } from '../../shared/types/imports'
import { writeAudit } from '../database/repositories/audit'
import {
  findImportJob, finishImportJob, insertImportJob, insertRejections, isCancelRequested, lockImportJob, markImportCancelled, requestImportCancel, updateImportProgress,
  type ImportCounts, type ImportFormat, type ImportJobRow, type RejectionRow,
} from '../database/repositories/imports'
import {
  deleteUnreceivedImport, deleteUploadChunks, findStoredUpload, importLeaseName, insertUploadChunk, markUploadReceived, readUploadChunk, type StoredUpload,
} from '../database/repositories/import-uploads'
import { dropLease, renewHeldLease, takeLease } from '../database/repositories/job-leases'
import { LineSplitter, type RawLine } from '../utils/line-splitter'
import { OrderedPipeline } from '../utils/ordered-pipeline'
import { isStored, type PostResult } from './ingest/post-run'
import { ingestBatch } from './ingest/ingest-batch'
import type { StationRef } from './ingest/ingest-run'
import { clip, describeRefusal, importItems, type Item } from './import-items'
import { IMPORT_WORKER_ID, ImportLeaseLost, importLeaseMs, keepLease } from './import-lease'
import { MAX_LINE_BYTES, receiveUpload } from './import-upload'
import { RuleError } from './rule-error'
import { isDatabaseUnavailable } from '../utils/database-unavailable'
import { writeTransaction } from '../database/write-retries'

const FLUSH_EVERY_RUNS = 200
// runs are written in slices of the file (at most 100 runs or 256 KiB of lines): attempts follow test time, so slices
// need no particular order; small slices keep each run's objects short-lived, which bounds the server's memory
const CHUNK_RUNS = 100
const CHUNK_BYTES = 256 * 1024
const PARALLEL_CHUNKS = 1
const WINDOW_CHUNKS = 2
const WINDOW_BYTES = 16 * 1024 * 1024
const FLUSH_EVERY_MS = 500

/** Imports this process is working on (the worker takes no more than a few at once). */
export const activeImports = new Set<string>()

/**
 * The stored file's lines in order, from its slices, after line `cursor` (a CSV keeps its header). Every byte goes
 * through `hash`, so the end of the file can be checked against the upload as received.
 */
async function* storedLines(db: Knex, jobId: string, upload: StoredUpload, cursor: number, format: ImportFormat, hash: ReturnType<typeof createHash>): AsyncGenerator<RawLine> {
  const splitter = new LineSplitter(MAX_LINE_BYTES)
  const keep = (l: RawLine) => l.number > cursor || (format === 'csv' && l.number === 1)
  // the next slice is read while this one is worked through; a read left behind by a stop must not go unhandled
  const read = (seq: number) => {
    const p = readUploadChunk(db, jobId, seq)
    p.catch(() => {})
    return p
  }
  let next = read(0)
  for (let seq = 0; seq < upload.chunks; seq++) {
    const chunk = await next
    if (!chunk) throw new Error(`Slice ${seq} of the stored upload is missing.`)
    if (seq + 1 < upload.chunks) next = read(seq + 1)
    hash.update(chunk)
    for (const l of splitter.push(chunk)) if (keep(l)) yield l
  }
  for (const l of splitter.end()) if (keep(l)) yield l
}

type Outcome = { item: Item; result?: PostResult; failed?: boolean }

/** A slice of the file's items, its runs written together as one batch; a lost database stops the import. */
async function writeChunk(db: Knex, station: StationRef, items: Item[]): Promise<Outcome[]> {
  const runs = items.filter((i): i is Extract<Item, { kind: 'run' }> => i.kind === 'run')
  const results = runs.length ? await ingestBatch(db, station, runs.map((r) => r.body), new Date(), { touchStation: false, prefixPointers: false }) : []
  const byItem = new Map(runs.map((r, k) => [r, results[k]!]))
  return items.map((item) => {
    const r = item.kind === 'run' ? byItem.get(item)! : undefined
    if (!r) return { item }
    if (r.status === 503) throw Object.assign(new Error(String((r as { detail?: string }).detail)), { code: 'ECONNREFUSED' })
    if (r.status === 500) return { item, failed: true }
    return { item, result: 'run' in r ? { status: r.status as 200 | 201, run: r.run } : { status: r.status as 400 | 409 | 422, detail: r.detail, errors: r.errors } }
  })
}

type ImportContext = { jobId: string; userId: number; station: StationRef; fileName: string; format: ImportFormat; linesTotal: number }

/**
 * Posts every run of the stored file after the job's line cursor and keeps the job row current; the job ends done,
 * failed or cancelled with its audit row, its stored upload deleted and its lease dropped in that same transaction.
 * Every progress write renews the lease inside its transaction, so a worker that lost the lease writes nothing more.
 */
async function processImport(db: Knex, job: ImportJobRow, upload: StoredUpload): Promise<void> {
  const ctx: ImportContext = { jobId: job.id, userId: job.createdBy.id, station: job.station, fileName: job.fileName, format: job.format, linesTotal: job.linesTotal ?? 0 }
  const lease = importLeaseName(job.id)
  const leaseMs = importLeaseMs()
  const keeper = keepLease(db, lease, IMPORT_WORKER_ID, leaseMs)
  const counts: ImportCounts = { linesDone: job.linesDone, runsDone: job.runsDone, runsCreated: job.runsCreated, runsReplayed: job.runsReplayed, runsRejected: job.runsRejected }
  const cursor = job.linesDone
  let pending: RejectionRow[] = []
  let lastFlush = Date.now()
  let sinceFlush = 0

  const fence = async (trx: Knex.Transaction) => {
    if (keeper.lost() || !(await renewHeldLease(trx, lease, IMPORT_WORKER_ID, leaseMs))) throw new ImportLeaseLost(ctx.jobId)
  }
  // rejections and the counters that include them move together; each progress write also looks for a cancel
  const flush = async (): Promise<boolean> => {
    const batch = pending
    const cancel = await writeTransaction(db, async (trx) => {
      await fence(trx)
      await insertRejections(trx, ctx.jobId, batch)
      await updateImportProgress(trx, ctx.jobId, counts)
      return isCancelRequested(trx, ctx.jobId)
    })
    pending = []
    lastFlush = Date.now()
    sinceFlush = 0
    return cancel
  }
  const reject = (line: number, runId: string | null, status: number, reason: string) => {
    counts.runsRejected++
    pending.push({ line, runId: runId === null ? null : runId.slice(0, 64), status, reason: clip(reason) })
  }

  const finish = async (status: 'done' | 'failed' | 'cancelled', error: string | null) => {
    await writeTransaction(db, async (trx) => {
      await fence(trx)
      await insertRejections(trx, ctx.jobId, pending)
      await finishImportJob(trx, ctx.jobId, status, counts, error)
      await deleteUploadChunks(trx, ctx.jobId)
      await writeAudit(trx, {
        userId: ctx.userId, stationId: ctx.station.id, action: 'import', entity: 'import_job', entityId: ctx.jobId,
        after: { fileName: ctx.fileName, format: ctx.format, station: ctx.station.name, status, linesTotal: ctx.linesTotal, uploadBytes: upload.bytes, uploadSha256: upload.sha256, resumes: job.resumes, ...counts, error },
      })
      await dropLease(trx, lease)
    })
    pending = []
  }

  const apply = (o: Outcome) => {
    const item = o.item
    if (item.kind === 'run') {
      counts.runsDone++
      const r = o.result
      if (o.failed || !r) reject(item.line, item.runId, 500, 'This run could not be stored because of an internal error.')
      else if (isStored(r)) {
        if (r.status === 201) counts.runsCreated++
        else counts.runsReplayed++
      } else {
        const d = describeRefusal(item, r)
        reject(d.line, item.runId, r.status, d.reason)
      }
    } else if (item.kind === 'reject') {
      counts.runsDone++
      reject(item.line, item.runId, item.status, item.reason)
    }
    counts.linesDone = Math.max(counts.linesDone, item.lastLine)
    sinceFlush++
  }
  // While one slice is in the database the next lines are already read, parsed and written.
  const pipeline = new OrderedPipeline<Outcome[]>(PARALLEL_CHUNKS, WINDOW_CHUNKS, WINDOW_BYTES)
  let chunk: Item[] = []
  let chunkRuns = 0
  let chunkBytes = 0
  const pushChunk = async () => {
    if (!chunk.length) return
    const items = chunk
    const bytes = chunkBytes
    chunk = []
    chunkRuns = 0
    chunkBytes = 0
    for (const outcomes of await pipeline.push(null, bytes, () => writeChunk(db, ctx.station, items))) for (const o of outcomes) apply(o)
  }
  let cancelled = false
  const hash = createHash('sha256')
  try {
    for await (const item of importItems(ctx.format, storedLines(db, ctx.jobId, upload, cursor, ctx.format, hash))) {
      // a CSV's header is read again on a resumed run but was counted before
      if (item.lastLine <= cursor) continue
      chunk.push(item)
      if (item.kind === 'run') { chunkRuns++; chunkBytes += item.bytes }
      if (chunkRuns >= CHUNK_RUNS || chunkBytes >= CHUNK_BYTES) await pushChunk()
      if (sinceFlush >= FLUSH_EVERY_RUNS || (sinceFlush > 0 && Date.now() - lastFlush >= FLUSH_EVERY_MS)) {
        if (await flush()) { cancelled = true; break }
      }
    }
    if (!cancelled) await pushChunk()
    // the slices already handed over are finished either way: each run is stored whole or not at all
    for (const outcomes of await pipeline.finish()) for (const o of outcomes) apply(o)
    if (cancelled) {
      await finish('cancelled', `Stopped after line ${counts.linesDone} of ${ctx.linesTotal}; the runs before it are stored. Importing the file again continues (stored runs are replayed).`)
      return
    }
    if (hash.digest('hex') !== upload.sha256) {
      await finish('failed', 'The stored upload no longer matches the file as received (its SHA-256 differs); import the file again to continue (stored runs are replayed).')
      return
    }
    counts.linesDone = ctx.linesTotal
    await finish('done', null)
  } catch (e: any) {
    await pipeline.settle()
    if (e instanceof ImportLeaseLost) return
    // the database away: the job stays running, its lease runs out and a worker carries it on once it is back
    if (isDatabaseUnavailable(e)) { console.warn(`[tercet] import ${ctx.jobId} paused: ${e?.message ?? e}`); return }
    console.error(e)
    await finish('failed', 'The import stopped because of an internal error; import the file again to continue (stored runs are replayed).').catch((f) => console.error(f))
  } finally {
    keeper.stop()
  }
}

/** Works through a job whose lease this process holds, from its line cursor to its end. */
export async function runImport(db: Knex, jobId: string): Promise<void> {
  if (activeImports.has(jobId)) return
  activeImports.add(jobId)
  try {
    const job = await findImportJob(db, jobId)
    const upload = await findStoredUpload(db, jobId)
    if (!job || job.status !== 'running' || !upload) return
    await processImport(db, job, upload)
  } catch (e) {
    console.error(e)
  } finally {
    activeImports.delete(jobId)
  }
}

/** Removes an upload that never arrived whole, with its stored slices and its lease, in one transaction. */
export async function discardUnreceivedUpload(db: Knex, jobId: string): Promise<void> {
  await writeTransaction(db, async (trx) => {
    await deleteUnreceivedImport(trx, jobId)
    await dropLease(trx, importLeaseName(jobId))
  })
}

export type ImportRequest = { userId: number; station: StationRef; fileName: string; format: ImportFormat }

/**
 * Stores the upload in the database as it arrives (the job is not listed until the file is received whole), then
 * starts posting its runs; answers once the whole file is received. A refused or broken upload leaves nothing behind.
 */
export async function startImport(db: Knex, req: ImportRequest, source: Readable): Promise<ImportJobRow> {
  const jobId = randomUUID()
  const lease = importLeaseName(jobId)
  await writeTransaction(db, async (trx) => {
    await insertImportJob(trx, { id: jobId, createdBy: req.userId, stationId: req.station.id, fileName: req.fileName, format: req.format })
    await takeLease(trx, lease, IMPORT_WORKER_ID, importLeaseMs())
  })
  const keeper = keepLease(db, lease)
  try {
    const received = await receiveUpload(source, req.format, (seq, bytes) => insertUploadChunk(db, jobId, seq, bytes))
    await markUploadReceived(db, jobId, received)
  } catch (e) {
    await discardUnreceivedUpload(db, jobId).catch((f) => console.error(f))
    throw e
  } finally {
    keeper.stop()
  }
  void runImport(db, jobId)
  return (await findImportJob(db, jobId))!
}

const STALLED_MS = 2 * 60_000

/**
 * Stops a running import. Its worker stops at its next progress write (within half a second); a stalled job, whose
 * worker went with a stopped server, is marked cancelled at once, its stored upload deleted and its lease dropped in
 * the same transaction (a worker that took it on meanwhile then loses its lease and stops). Runs stored stay.
 */
export async function cancelImport(db: Knex, actorId: number, id: string, now = new Date()): Promise<ImportJob> {
  await writeTransaction(db, async (trx) => {
    const job = (await lockImportJob(trx, id)) ? await findImportJob(trx, id) : undefined
    if (!job) throw new RuleError(404, 'No such import.')
    if (job.status !== 'running') throw new RuleError(409, `The import has already ${job.status === 'done' ? 'finished' : job.status === 'failed' ? 'stopped' : 'been cancelled'}.`, [], { importStatus: job.status })
    const stalled = importJobView(job, now).stalled
    if (stalled) {
      await markImportCancelled(trx, id, actorId, 'Cancelled after its server stopped; importing the file again continues (stored runs are replayed).')
      await deleteUploadChunks(trx, id)
      await dropLease(trx, importLeaseName(id))
    } else await requestImportCancel(trx, id, actorId)
    await writeAudit(trx, {
      userId: actorId, action: 'cancel', entity: 'import_job', entityId: id,
      before: { status: job.status, runsDone: job.runsDone }, after: { status: stalled ? 'cancelled' : 'running', cancelRequested: true, stalled },
    })
  })
  return importJobView((await findImportJob(db, id))!, now)
}

const iso = (d: Date) => new Date(d).toISOString()

/** The job as the routes answer it; a running job whose counters stopped moving was left behind by a stopped server. */
export function importJobView(job: ImportJobRow, now = new Date()): ImportJob {
  return {
    ...job,
    startedAt: iso(job.startedAt), updatedAt: iso(job.updatedAt),
    finishedAt: job.finishedAt && iso(job.finishedAt), cancelRequestedAt: job.cancelRequestedAt && iso(job.cancelRequestedAt),
    stalled: job.status === 'running' && now.getTime() - new Date(job.updatedAt).getTime() > STALLED_MS,
  }
}
