// The lines of an import file as things to post: a run, a line refused before posting, or a line holding nothing.
import {
  checkRunCsvHeader, CsvRecordJoiner, CsvRunAssembler, locateCsvPointer, parseCsvRecord, type CsvRun, type CsvRunRow,
} from '../../shared/utils/run-csv'
import type { ImportFormat } from '../../shared/types/imports'
import { isBlankLine, type RawLine } from '../utils/line-splitter'
import type { RefusedResult } from './ingest/post-run'
import { MAX_LINE_BYTES } from './import-upload'

const MAX_REASON = 1000

export type Item =
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

/**
 * The items of the file's lines. A resumed import passes the lines after its cursor (and a CSV's header): items end
 * where a run ends, so the cursor always falls between two items and the rest of the file reads as it did before.
 */
export function importItems(format: ImportFormat, lines: AsyncIterable<RawLine>): AsyncGenerator<Item> {
  return format === 'csv' ? csvItems(lines) : jsonlItems(lines)
}

export function clip(s: string, n = MAX_REASON): string {
  return s.length <= n ? s : s.slice(0, n - 1) + '…'
}

/** The line a refused run is recorded at and why, in the file's own terms. */
export function describeRefusal(item: Extract<Item, { kind: 'run' }>, r: RefusedResult): { line: number; reason: string } {
  const errors = r.errors ?? []
  if (!item.locate) {
    const parts = errors.map((e) => `${e.pointer || '/'}: ${e.message}`)
    return { line: item.line, reason: clip([r.detail, ...parts].join(' ')) }
  }
  const located = errors.map((e) => ({ ...item.locate!(e.pointer), message: e.message }))
  const parts = located.map((e) => `line ${e.line} ${e.field}: ${e.message}`)
  return { line: located[0]?.line ?? item.line, reason: clip([r.detail, ...parts].join(' ')) }
}
