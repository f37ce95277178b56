import type { H3Event } from 'h3'
import { problem } from './problem'

/** Bodies are read as sent: one a client compressed is refused rather than inflated (a small one can inflate to gigabytes). */
export function refuseContentEncoding(event: H3Event): void {
  const encoding = (getHeader(event, 'content-encoding') ?? '').trim().toLowerCase()
  if (encoding && encoding !== 'identity') {
    throw problem(415, `Send the body uncompressed; Content-Encoding ${encoding} is not accepted.`, { errors: [{ pointer: '', message: `content encoding ${encoding} is not accepted` }] })
  }
}

/** The request's media type, lower case, without parameters; '' when none is declared. */
export function mediaTypeOf(event: H3Event): string {
  return (getHeader(event, 'content-type') ?? '').split(';')[0]!.trim().toLowerCase()
}

/** A JSON body must say so: application/json (a charset parameter is fine). */
export function requireJsonType(event: H3Event): void {
  const type = mediaTypeOf(event)
  if (type !== 'application/json') {
    throw problem(415, 'Send the body as application/json.', { errors: [{ pointer: '', message: `content type ${type || '(none)'} is not application/json` }] })
  }
}

/**
 * The body's bytes, read from the stream and given up as soon as they pass maxBytes (413): a body without a declared
 * length is never held past the limit. The rest of a refused body is read and dropped, so the client, still sending,
 * gets the answer and keeps its connection (the server's request timeout bounds a body that never ends).
 */
export async function readBytesLimited(event: H3Event, maxBytes: number): Promise<Buffer> {
  const tooLarge = () => {
    event.node.req.resume()
    return problem(413, `The body is larger than ${maxBytes} bytes.`)
  }
  const declared = Number(getHeader(event, 'content-length') ?? NaN)
  if (Number.isFinite(declared) && declared > maxBytes) throw tooLarge()
  // a request made inside the server (Nitro's local fetch) carries its body already
  if ((event.node.req as { body?: unknown }).body != null) {
    const whole = (await readRawBody(event, false)) ?? Buffer.alloc(0)
    if (whole.length > maxBytes) throw tooLarge()
    return Buffer.from(whole)
  }
  const chunks: Buffer[] = []
  let size = 0
  for await (const chunk of event.node.req.iterator({ destroyOnReturn: false })) {
    size += (chunk as Buffer).length
    if (size > maxBytes) break
    chunks.push(chunk as Buffer)
  }
  // the iterator has let go of the stream here, so the rest can flow away
  if (size > maxBytes) throw tooLarge()
  return Buffer.concat(chunks, size)
}

/** Parses JSON text; 400 when it is not JSON. */
export function parseJsonBody(raw: Buffer): unknown {
  try {
    return JSON.parse(raw.toString('utf8'))
  } catch {
    throw problem(400, 'The request body is not valid JSON.', { errors: [{ pointer: '', message: 'invalid JSON' }] })
  }
}

/** Reads a JSON body of at most maxBytes: 415 when it is not plain application/json, 413 beyond the size, 400 when it is not JSON. */
export async function readJsonLimited(event: H3Event, maxBytes: number): Promise<unknown> {
  refuseContentEncoding(event)
  requireJsonType(event)
  const raw = await readBytesLimited(event, maxBytes)
  if (raw.length === 0) throw problem(400, 'The request has no body.', { errors: [{ pointer: '', message: 'a JSON body is required' }] })
  return parseJsonBody(raw)
}
