// Historical import of test runs from a file. The upload is first copied to a temporary file while every line
// is checked (UTF-8 text, and for CSV a known header); a file failing those checks is refused whole before any
// run is written. The runs are then read back line by line and written in slices through the station batch
// endpoint's own ingestBatch, so validation, judging, test-time order and idempotency are exactly the station's.
import { randomUUID } from 'node:crypto'
import { createReadStream, createWriteStream } from 'node:fs'
import { unlink } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Readable } from 'node:stream'
import type { Knex } from 'knex'
import {
  checkRunCsvHeader, CsvRecordJoiner, CsvRunAssembler, describeHeaderProblem, locateCsvPointer, parseCsvRecord,
  type CsvRun, type CsvRunRow,
} from '../../shared/utils/run-csv'
import type { ImportJob } from '../../shared/types/imports'
import { writeAudit } from '../database/repositories/audit'
import {
  findImportJob, finishImportJob, insertImportJob, insertRejections, isCancelRequested, lockImportJob, markImportCancelled, requestImportCancel, updateImportProgress,
  type ImportCounts, type ImportFormat, type ImportJobRow, type RejectionRow,
} from '../database/repositories/imports'
import { isBlankLine, isUtf8Line, LineSplitter, type RawLine } from '../utils/line-splitter'
import { OrderedPipeline } from '../utils/ordered-pipeline'
import { isStored, type PostResult, type RefusedResult } from './ingest/post-run'
import { ingestBatch } from './ingest/ingest-batch'
import type { StationRef } from './ingest/ingest-run'
import { RuleError } from './rule-error'

export const MAX_LINE_BYTES = 2 * 1024 * 1024
export const MAX_FILE_BYTES = 2 * 1024 ** 3
const FLUSH_EVERY_RUNS = 200
// runs are written in slices of the file (at most 100 runs or 256 KiB of lines): attempts follow test time, so slices
// need no particular order; small slices keep each run's objects short-lived, which bounds the server's memory
const CHUNK_RUNS = 100
const CHUNK_BYTES = 256 * 1024
const PARALLEL_CHUNKS = 1
const WINDOW_CHUNKS = 2
const WINDOW_BYTES = 16 * 1024 * 1024
const FLUSH_EVERY_MS = 500
const MAX_REASON = 1000
const UNAVAILABLE = new Set(['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ETIMEDOUT', 'ER_CON_COUNT_ERROR'])

type Spooled = { path: string; lines: number; format: ImportFormat }

/** The upload is refused as a whole, before any run of it is written; each message is about the file, not a body field. */
function refuse(status: 400 | 413, detail: string, messages: string[], extra: Record<string, unknown> = {}): RuleError {
  return new RuleError(status, detail, messages.map((message) => ({ pointer: '', message })), extra)
}

/**
 * Copies the upload to a temporary file, checking each line as it passes. Refuses (RuleError) a CSV whose
 * header names unknown or misses required columns, any line that is not UTF-8, and a file without runs;
 * the rest of a refused upload is read and dropped so that the client receives the answer.
 */
export async function spoolUpload(source: Readable, format: ImportFormat): Promise<Spooled> {
  const path = join(tmpdir(), `tercet-import-${randomUUID()}.part`)
  const out = createWriteStream(path)
  let writeError: Error | undefined
  out.on('error', (e) => { writeError = e })
  const splitter = new LineSplitter(MAX_LINE_BYTES)
  let bytes = 0
  let content = false
  const check = (l: RawLine) => {
    if (!l.tooLong && !isUtf8Line(l.bytes)) {
      throw refuse(400, `Line ${l.number} is not UTF-8 text; save the file as UTF-8 and import it again. Nothing was imported.`, [`line ${l.number}: not valid UTF-8`], { lines: [l.number] })
    }
    if (format === 'csv' && l.number === 1) checkCsvHeader(l)
    else if (l.tooLong || !isBlankLine(l.bytes)) content = true
  }
  try {
    for await (const chunk of source.iterator({ destroyOnReturn: false }) as AsyncIterable<Buffer>) {
      bytes += chunk.length
      if (bytes > MAX_FILE_BYTES) throw refuse(413, `The file is larger than ${MAX_FILE_BYTES} bytes.`, ['file too large'])
      for (const l of splitter.push(chunk)) check(l)
      if (writeError) throw writeError
      if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', r))
    }
    for (const l of splitter.end()) check(l)
    if ((source as { complete?: boolean }).complete === false) throw new Error('The upload was interrupted.')
    if (format === 'csv' && splitter.lines === 0) throw refuse(400, 'The CSV file is empty; it needs a header row and one row per measurement.', ['empty file'])
    if (!content) throw refuse(400, 'The file holds no runs.', ['no runs in the file'])
    await new Promise<void>((done, fail) => out.end((e?: Error | null) => (e || writeError ? fail(e ?? writeError) : done())))
    return { path, lines: splitter.lines, format }
  } catch (e) {
    source.resume()
    // the file may not be open yet; removing it before the stream closes would leave it behind
    const closed = new Promise<void>((r) => out.once('close', () => r()))
    out.destroy()
    await closed
    await unlink(path).catch(() => {})
    throw e
  }
}

function checkCsvHeader(l: RawLine): void {
  if (l.tooLong) throw refuse(400, 'The CSV header line is too long.', ['line 1: header too long'])
  let cells: string[] | undefined
  try {
    cells = parseCsvRecord(l.bytes.toString('utf8'))
  } catch {
    cells = undefined
  }
  if (!cells) throw refuse(400, 'The first line of a CSV file must be its header.', ['line 1: no header'])
  const h = checkRunCsvHeader(cells)
  if (!h.ok) {
    const messages = describeHeaderProblem(h)
    throw refuse(400, `The CSV header does not fit: ${messages.join('; ')}. Nothing was imported.`, messages, {
      unknownColumns: h.unknown, missingColumns: h.missing, duplicateColumns: h.duplicate,
    })
  }
}

async function* fileLines(path: string): AsyncGenerator<RawLine> {
  const splitter = new LineSplitter(MAX_LINE_BYTES)
  for await (const chunk of createReadStream(path, { highWaterMark: 256 * 1024 })) {
    for (const l of splitter.push(chunk as Buffer)) yield l
  }
  for (const l of splitter.end()) yield l
}

/** One thing to post, or a line that was refused before posting, or a line that holds nothing. */
type Item =
  | { kind: 'run'; line: number; lastLine: number; runId: string | null; body: unknown; bytes: number; locate?: (pointer: string) => { line: number; field: string } }
  | { kind: 'reject'; line: number; lastLine: number; runId: string | null; status: number; reason: string }
  | { kind: 'skip'; lastLine: number }

const tooLong = (n: number) => `line ${n} is longer than ${MAX_LINE_BYTES} bytes`

async function* jsonlItems(lines: AsyncIterable<RawLine>): AsyncGenerator<Item> {
  for await (const l of lines) {
    if (l.tooLong) { yield { kind: 'reject', line: l.number, lastLine: l.number, runId: null, status: 400, reason: tooLong(l.number) }; continue }
    if (isBlankLine(l.bytes)) { yield { kind: 'skip', lastLine: l.number }; continue }
    let body: unknown
    try {
      body = JSON.parse(l.bytes.toString('utf8'))
    } catch (e) {
      yield { kind: 'reject', line: l.number, lastLine: l.number, runId: null, status: 400, reason: `The line is not valid JSON: ${(e as Error).message}` }
      continue
    }
    const id = (body as { id?: unknown } | null)?.id
    yield { kind: 'run', line: l.number, lastLine: l.number, runId: typeof id === 'string' ? id : null, body, bytes: l.bytes.length }
  }
}

function csvItem(run: CsvRun): Item {
  const runId = run.id || null
  if (run.problem) return { kind: 'reject', line: run.problem.line, lastLine: run.lastLine, runId, status: 400, reason: run.problem.reason }
  return { kind: 'run', line: run.firstLine, lastLine: run.lastLine, runId, body: run.body, bytes: run.bytes, locate: (p) => locateCsvPointer(run, p) }
}

function csvRow(r: { line: number; text: string; error?: string }): CsvRunRow | undefined {
  if (r.error) return { line: r.line, error: r.error, text: r.text }
  try {
    const cells = parseCsvRecord(r.text)
    return cells && cells.some((c) => c.trim() !== '') ? { line: r.line, cells } : undefined
  } catch (e) {
    return { line: r.line, error: (e as Error).message, text: r.text }
  }
}

async function* csvItems(lines: AsyncIterable<RawLine>): AsyncGenerator<Item> {
  let assembler: CsvRunAssembler | undefined
  const joiner = new CsvRecordJoiner()
  for await (const l of lines) {
    if (l.number === 1) {
      const h = checkRunCsvHeader(parseCsvRecord(l.bytes.toString('utf8')) ?? [])
      if (!h.ok) throw new Error('The CSV header changed after it was checked.')
      assembler = new CsvRunAssembler(h.columns)
      yield { kind: 'skip', lastLine: 1 }
      continue
    }
    const r = l.tooLong ? { line: l.number, text: '', error: tooLong(l.number) } : joiner.push(l.bytes.toString('utf8'), l.number)
    const row = r && csvRow(r)
    const done = row && assembler!.push(row)
    if (done) yield csvItem(done)
  }
  const rest = joiner.end()
  const row = rest && csvRow(rest)
  const done = row && assembler?.push(row)
  if (done) yield csvItem(done)
  const last = assembler?.end()
  if (last) yield csvItem(last)
}

function clip(s: string, n = MAX_REASON): string {
  return s.length <= n ? s : s.slice(0, n - 1) + '…'
}

/** The line a refused run is recorded at and why, in the file's own terms. */
function describeRefusal(item: Extract<Item, { kind: 'run' }>, r: RefusedResult): { line: number; reason: string } {
  const errors = r.errors ?? []
  if (!item.locate) {
    const parts = errors.map((e) => `${e.pointer || '/'}: ${e.message}`)
    return { line: item.line, reason: clip([r.detail, ...parts].join(' ')) }
  }
  const located = errors.map((e) => ({ ...item.locate!(e.pointer), message: e.message }))
  const parts = located.map((e) => `line ${e.line} ${e.field}: ${e.message}`)
  return { line: located[0]?.line ?? item.line, reason: clip([r.detail, ...parts].join(' ')) }
}

function isUnavailable(e: any): boolean {
  return UNAVAILABLE.has(e?.code) || /Timeout acquiring a connection/.test(String(e?.message))
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

export type ImportContext = { jobId: string; userId: number; station: StationRef; fileName: string; format: ImportFormat }

/** Posts every run of the spooled file and keeps the job row current; the job ends done or failed, with its audit row. */
export async function processImport(db: Knex, ctx: ImportContext, spooled: Spooled): Promise<void> {
  const counts: ImportCounts = { linesDone: 0, runsDone: 0, runsCreated: 0, runsReplayed: 0, runsRejected: 0 }
  let pending: RejectionRow[] = []
  let lastFlush = Date.now()
  let sinceFlush = 0

  // rejections and the counters that include them move together; each progress write also looks for a cancel
  const flush = async (): Promise<boolean> => {
    const batch = pending
    pending = []
    const cancel = await db.transaction(async (trx) => {
      await insertRejections(trx, ctx.jobId, batch)
      await updateImportProgress(trx, ctx.jobId, counts)
      return isCancelRequested(trx, ctx.jobId)
    })
    lastFlush = Date.now()
    sinceFlush = 0
    return cancel
  }
  const reject = (line: number, runId: string | null, status: number, reason: string) => {
    counts.runsRejected++
    pending.push({ line, runId: runId === null ? null : runId.slice(0, 64), status, reason: clip(reason) })
  }

  const finish = async (status: 'done' | 'failed' | 'cancelled', error: string | null) => {
    const batch = pending
    pending = []
    await db.transaction(async (trx) => {
      await insertRejections(trx, ctx.jobId, batch)
      await finishImportJob(trx, ctx.jobId, status, counts, error)
      await writeAudit(trx, {
        userId: ctx.userId, stationId: ctx.station.id, action: 'import', entity: 'import_job', entityId: ctx.jobId,
        after: { fileName: ctx.fileName, format: ctx.format, station: ctx.station.name, status, linesTotal: spooled.lines, ...counts, error },
      })
    })
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
  try {
    const lines = fileLines(spooled.path)
    const items = ctx.format === 'csv' ? csvItems(lines) : jsonlItems(lines)
    for await (const item of items) {
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
      await finish('cancelled', `Stopped after line ${counts.linesDone} of ${spooled.lines}; the runs before it are stored. Importing the file again continues (stored runs are replayed).`)
      return
    }
    counts.linesDone = spooled.lines
    await finish('done', null)
  } catch (e: any) {
    console.error(e)
    await pipeline.settle()
    const message = isUnavailable(e) ? 'The database became unavailable; import the file again to continue (stored runs are replayed).' : 'The import stopped because of an internal error; import the file again to continue.'
    await finish('failed', message).catch((f) => console.error(f))
  } finally {
    await unlink(spooled.path).catch(() => {})
  }
}

/** Spools the upload, creates the job and starts posting its runs; answers once the whole file is received. */
export async function startImport(db: Knex, opts: Omit<ImportContext, 'jobId'>, source: Readable): Promise<ImportJobRow> {
  const spooled = await spoolUpload(source, opts.format)
  const jobId = randomUUID()
  try {
    await insertImportJob(db, { id: jobId, createdBy: opts.userId, stationId: opts.station.id, fileName: opts.fileName, format: opts.format, linesTotal: spooled.lines })
  } catch (e) {
    await unlink(spooled.path).catch(() => {})
    throw e
  }
  void processImport(db, { ...opts, jobId }, spooled)
  return (await findImportJob(db, jobId))!
}

const STALLED_MS = 2 * 60_000

/**
 * Stops a running import. Its worker stops at its next progress write (within half a second); a stalled job, whose
 * worker went with a stopped server, is marked cancelled at once. Runs stored before the stop stay.
 */
export async function cancelImport(db: Knex, actorId: number, id: string, now = new Date()): Promise<ImportJob> {
  await db.transaction(async (trx) => {
    const job = (await lockImportJob(trx, id)) ? await findImportJob(trx, id) : undefined
    if (!job) throw new RuleError(404, 'No such import.')
    if (job.status !== 'running') throw new RuleError(409, `The import has already ${job.status === 'done' ? 'finished' : job.status === 'failed' ? 'stopped' : 'been cancelled'}.`, [], { importStatus: job.status })
    const stalled = importJobView(job, now).stalled
    if (stalled) await markImportCancelled(trx, id, actorId, 'Cancelled after its server stopped; importing the file again continues (stored runs are replayed).')
    else await requestImportCancel(trx, id, actorId)
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
