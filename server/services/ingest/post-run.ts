import type { Knex } from 'knex'
import { validateRun } from '../../utils/run-validator'
import { ingestRun, RunRejected, type IngestOptions, type StationRef } from './ingest-run'
import type { RunView } from './run-view'

export type StoredResult = { status: 200 | 201; run: RunView }
export type RefusedResult = { status: 400 | 409 | 422; detail: string; errors?: { pointer: string; message: string }[] }
export type PostResult = StoredResult | RefusedResult

export function isStored(r: PostResult): r is StoredResult {
  return r.status === 200 || r.status === 201
}

/** Validation and ingest of one run body, with the outcome as the single-run endpoint would answer it. */
export async function postRun(db: Knex, station: StationRef, body: unknown, pointerPrefix = '', options: IngestOptions = {}): Promise<PostResult> {
  const v = validateRun(body)
  const prefix = (errs: { pointer: string; message: string }[]) => errs.map((e) => ({ ...e, pointer: pointerPrefix + e.pointer }))
  if (!v.ok) return { status: 400, detail: 'The run does not match the schema.', errors: prefix(v.errors) }
  try {
    const r = await ingestRun(db, station, v.value, new Date(), options)
    return r.status === 409 ? { status: 409, detail: r.detail } : r
  } catch (e) {
    if (e instanceof RunRejected) return { status: 422, detail: e.message, errors: prefix(e.errors) }
    throw e
  }
}
