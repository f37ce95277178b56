import type { H3Event } from 'h3'
import type { FieldError } from '../../shared/types/problem'
import { problem } from './problem'
import { parseJsonBody, readBytesLimited, refuseContentEncoding, requireJsonType } from './json-body'

type Validator<T> = (body: unknown) => { ok: true; value: T } | { ok: false; errors: FieldError[] }

// the largest form body: 10,000 serial lines of up to 300 characters, or 10,000 unit decisions
const MAX_BYTES = 8 * 1024 * 1024

/**
 * Reads a JSON body and validates it: 415 for a compressed body or one not sent as application/json, 413 past
 * maxBytes, 400 problem+json with JSON-Pointer errors when it is not JSON or does not fit. No body reads as {}.
 */
export async function readValidBody<T>(event: H3Event, validate: Validator<T>, maxBytes = MAX_BYTES): Promise<T> {
  refuseContentEncoding(event)
  const raw = await readBytesLimited(event, maxBytes)
  let body: unknown = {}
  if (raw.length > 0) {
    requireJsonType(event)
    body = parseJsonBody(raw)
  }
  const r = validate(body)
  if (!r.ok) throw problem(400, 'The request body does not match the schema.', { errors: r.errors })
  return r.value
}
