import type { H3Event } from 'h3'
import type { FieldError } from '../../shared/types/problem'
import { problem } from './problem'

type Validator<T> = (body: unknown) => { ok: true; value: T } | { ok: false; errors: FieldError[] }

/** Reads a JSON body and validates it; 400 problem+json with JSON-Pointer errors when it does not fit. */
export async function readValidBody<T>(event: H3Event, validate: Validator<T>): Promise<T> {
  let body: unknown
  try {
    body = await readBody(event)
  } catch {
    throw problem(400, 'The request body is not valid JSON.', { errors: [{ pointer: '', message: 'invalid JSON' }] })
  }
  const r = validate(body ?? {})
  if (!r.ok) throw problem(400, 'The request body does not match the schema.', { errors: r.errors })
  return r.value
}
