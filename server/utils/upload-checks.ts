import type { H3Event } from 'h3'
import { mediaTypeOf, readJsonLimited } from './json-body'
import { problem } from './problem'

/**
 * 415 unless the declared type is one of `allowed` ('' allows a request that declares none: its content is
 * sniffed anyway) and any charset it names is UTF-8 (or its ASCII subset).
 */
export function requireMediaType(event: H3Event, allowed: readonly string[], expected: string): void {
  const header = getHeader(event, 'content-type') ?? ''
  const type = mediaTypeOf(event)
  if (!allowed.includes(type)) {
    throw problem(415, `Send ${expected}; this request says it holds ${type || 'nothing in particular'}.`, { errors: [{ pointer: '', message: `content type ${type || '(none)'} is not accepted here` }], accepted: allowed.filter(Boolean) })
  }
  const charset = /;\s*charset\s*=\s*"?([^";\s]+)/i.exec(header)?.[1]?.toLowerCase()
  if (charset && !['utf-8', 'utf8', 'us-ascii'].includes(charset)) {
    throw problem(415, `Send the file as UTF-8 text, not ${charset}.`, { errors: [{ pointer: '', message: `charset ${charset} is not accepted` }] })
  }
}

/** 413 at once when the declared length is beyond the limit, before any of the body is read. */
export function requireDeclaredLength(event: H3Event, maxBytes: number, what = 'The file'): void {
  const declared = Number(getHeader(event, 'content-length') ?? NaN)
  if (Number.isFinite(declared) && declared > maxBytes) {
    throw problem(413, `${what} is larger than ${maxBytes} bytes, the most this takes.`, { errors: [{ pointer: '', message: `at most ${maxBytes} bytes` }], maxBytes })
  }
}

type Validator<T> = (body: unknown) => { ok: true; value: T } | { ok: false; errors: { pointer: string; message: string }[] }

/** A JSON body carrying an upload (readJsonLimited: 415, 413, 400), then its schema: 400 with pointers when it does not fit. */
export async function readValidUpload<T>(event: H3Event, validate: Validator<T>, maxBytes: number): Promise<T> {
  const r = validate(await readJsonLimited(event, maxBytes))
  if (!r.ok) throw problem(400, 'The request body does not match the schema.', { errors: r.errors })
  return r.value
}
