// Receives an import's upload: every line is checked as it passes (UTF-8 text without NUL bytes, not some other
// kind of file, a CSV's header) and the bytes are handed on in slices of about 1 MiB, in order, to be stored. A
// file failing a check is refused whole (RuleError) before any run of it is written.
import { createHash } from 'node:crypto'
import type { Readable } from 'node:stream'
import { checkRunCsvHeader, describeHeaderProblem, parseCsvRecord } from '../../shared/utils/run-csv'
import type { ImportFormat } from '../../shared/types/imports'
import { binaryKind } from '../../shared/utils/upload-text'
import { isBlankLine, isUtf8Line, LineSplitter, type RawLine } from '../utils/line-splitter'
import { RuleError } from './rule-error'

export const MAX_LINE_BYTES = 2 * 1024 * 1024
export const MAX_FILE_BYTES = 2 * 1024 ** 3
export const UPLOAD_CHUNK_BYTES = 1024 * 1024

export type ReceivedUpload = { bytes: number; sha256: string; chunks: number; lines: number }

/** The upload is refused as a whole; each message is about the file, not a body field. */
function refuse(status: 400 | 413 | 422, detail: string, messages: string[], extra: Record<string, unknown> = {}): RuleError {
  return new RuleError(status, detail, messages.map((message) => ({ pointer: '', message })), extra)
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

const FORMAT_NAME: Record<ImportFormat, string> = { jsonl: 'JSON Lines', csv: 'CSV' }

/**
 * Reads the whole upload, checking it, and calls `store` with each slice in order (awaiting it, so a slow store
 * slows the upload rather than filling memory). The rest of a refused upload is read and dropped so that the client
 * receives the answer.
 */
export async function receiveUpload(
  source: Readable, format: ImportFormat, store: (seq: number, bytes: Buffer) => Promise<void>, maxBytes = MAX_FILE_BYTES,
): Promise<ReceivedUpload> {
  const splitter = new LineSplitter(MAX_LINE_BYTES)
  const hash = createHash('sha256')
  let bytes = 0
  let seq = 0
  let parts: Buffer[] = []
  let partBytes = 0
  let head = Buffer.alloc(0)
  let content = false
  const check = (l: RawLine) => {
    if (!l.tooLong && !isUtf8Line(l.bytes)) {
      throw refuse(422, `Line ${l.number} is not UTF-8 text; save the file as UTF-8 and import it again. Nothing was imported.`, [`line ${l.number}: not valid UTF-8`], { lines: [l.number] })
    }
    if (format === 'csv' && l.number === 1) checkCsvHeader(l)
    else if (l.tooLong || !isBlankLine(l.bytes)) content = true
  }
  const sniff = (chunk: Buffer) => {
    if (head.length >= 16) return
    head = Buffer.concat([head, chunk.subarray(0, 16 - head.length)])
    const kind = binaryKind(head)
    if (kind) throw refuse(422, `The file is ${kind}, not ${FORMAT_NAME[format]} text. Export the runs as .${format} and import that file.`, [`the file's content is ${kind}`], { detectedKind: kind })
  }
  const flushParts = async () => {
    if (!partBytes) return
    const slice = parts.length === 1 ? parts[0]! : Buffer.concat(parts, partBytes)
    parts = []
    partBytes = 0
    await store(seq++, slice)
  }
  try {
    for await (const chunk of source.iterator({ destroyOnReturn: false }) as AsyncIterable<Buffer>) {
      bytes += chunk.length
      if (bytes > maxBytes) throw refuse(413, `The file is larger than ${maxBytes} bytes, the most one import takes. Split it and import the parts.`, ['file too large'], { maxBytes })
      sniff(chunk)
      const nul = chunk.indexOf(0)
      if (nul >= 0) {
        throw refuse(422, `The file holds a NUL byte (at byte ${bytes - chunk.length + nul + 1}); it is not ${FORMAT_NAME[format]} text. Nothing was imported.`, ['the file holds NUL bytes: not a text file'])
      }
      for (const l of splitter.push(chunk)) check(l)
      hash.update(chunk)
      parts.push(chunk)
      partBytes += chunk.length
      if (partBytes >= UPLOAD_CHUNK_BYTES) await flushParts()
    }
    for (const l of splitter.end()) check(l)
    if ((source as { complete?: boolean }).complete === false) throw new Error('The upload was interrupted.')
    if (format === 'csv' && splitter.lines === 0) throw refuse(400, 'The CSV file is empty; it needs a header row and one row per measurement.', ['empty file'])
    if (!content) throw refuse(400, 'The file holds no runs.', ['no runs in the file'])
    await flushParts()
    return { bytes, sha256: hash.digest('hex'), chunks: seq, lines: splitter.lines }
  } catch (e) {
    source.resume()
    throw e
  }
}
