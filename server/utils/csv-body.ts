import type { H3Event } from 'h3'
import { problem } from './problem'

// Browsers label a .csv upload variously; all of these are plain text.
const CSV_TYPES = ['text/csv', 'text/plain', 'application/csv', 'application/vnd.ms-excel']

/** Reads a text/csv body of at most maxBytes as UTF-8: 415 for another type, 413 beyond the size, 400 when empty. */
export async function readCsvBody(event: H3Event, maxBytes: number): Promise<string> {
  const type = (getHeader(event, 'content-type') ?? '').split(';')[0]!.trim().toLowerCase()
  if (!CSV_TYPES.includes(type)) throw problem(415, 'Send the limit table as text/csv.', { errors: [{ pointer: '', message: `content type ${type || '(none)'} is not text/csv` }] })
  const declared = Number(getHeader(event, 'content-length') ?? NaN)
  if (Number.isFinite(declared) && declared > maxBytes) throw problem(413, `The file is larger than ${maxBytes} bytes.`)
  const raw = await readRawBody(event, false)
  if (raw && raw.length > maxBytes) throw problem(413, `The file is larger than ${maxBytes} bytes.`)
  if (!raw || raw.length === 0) throw problem(400, 'The request has no CSV body.', { errors: [{ pointer: '', message: 'a CSV file is required' }] })
  return new TextDecoder('utf-8', { fatal: false }).decode(raw)
}
