import type { H3Event } from 'h3'
import { problem } from './problem'

/** Reads a JSON body of at most maxBytes: 413 beyond it, 400 when it is not JSON. */
export async function readJsonLimited(event: H3Event, maxBytes: number): Promise<unknown> {
  const declared = Number(getHeader(event, 'content-length') ?? NaN)
  if (Number.isFinite(declared) && declared > maxBytes) throw problem(413, `The body is larger than ${maxBytes} bytes.`)
  const raw = await readRawBody(event, false)
  if (raw && raw.length > maxBytes) throw problem(413, `The body is larger than ${maxBytes} bytes.`)
  if (!raw || raw.length === 0) throw problem(400, 'The request has no body.', { errors: [{ pointer: '', message: 'a JSON body is required' }] })
  try {
    return JSON.parse(raw.toString('utf8'))
  } catch {
    throw problem(400, 'The request body is not valid JSON.', { errors: [{ pointer: '', message: 'invalid JSON' }] })
  }
}
