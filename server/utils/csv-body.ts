import type { H3Event } from 'h3'
import { binaryKind } from '../../shared/utils/upload-text'
import { problem } from './problem'
import { mediaTypeOf, readBytesLimited, refuseContentEncoding } from './json-body'

// Browsers label a .csv upload variously; all of these are plain text.
export const CSV_TYPES = ['text/csv', 'text/plain', 'application/csv', 'application/vnd.ms-excel']

/** Reads a text/csv body of at most maxBytes as UTF-8: 415 for another type or a compressed body, 413 beyond the size, 400 when empty. */
export async function readCsvBody(event: H3Event, maxBytes: number): Promise<string> {
  const type = mediaTypeOf(event)
  if (!CSV_TYPES.includes(type)) throw problem(415, 'Send the limit table as text/csv.', { errors: [{ pointer: '', message: `content type ${type || '(none)'} is not text/csv` }] })
  refuseContentEncoding(event)
  const raw = await readBytesLimited(event, maxBytes)
  if (raw.length === 0) throw problem(400, 'The request has no CSV body.', { errors: [{ pointer: '', message: 'a CSV file is required' }] })
  // the content decides, not the declared type: text in UTF-8 without NUL bytes, not a workbook or a PDF renamed .csv
  const kind = binaryKind(raw.subarray(0, 16))
  if (kind) throw problem(422, `The file is ${kind}, not CSV text.`, { errors: [{ pointer: '', message: `the file is ${kind}` }], detectedKind: kind })
  if (raw.includes(0)) throw problem(422, 'The file holds NUL bytes: it is not CSV text.', { errors: [{ pointer: '', message: 'NUL bytes: not a text file' }] })
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(raw)
  } catch {
    throw problem(422, 'The file is not UTF-8 text; save it as CSV in UTF-8 and import it again.', { errors: [{ pointer: '', message: 'not valid UTF-8' }] })
  }
}
