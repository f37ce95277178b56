import Ajv2020 from 'ajv/dist/2020.js'
import type { AnySchemaObject, ErrorObject } from 'ajv/dist/2020.js'
import addFormats from 'ajv-formats'
import type { FromSchema } from 'json-schema-to-ts'
import { runSchema as runSchemaObject } from '../../shared/schemas/run.schema'
import { runBatchSchema as runBatchSchemaObject } from '../../shared/schemas/run-batch.schema'

export interface ValidationError {
  /** JSON Pointer (RFC 6901) into the request body; "" is the body itself. */
  pointer: string
  message: string
}

export type ValidationResult<T> = { ok: true; value: T } | { ok: false; errors: ValidationError[] }

export type Validator<T> = (body: unknown) => ValidationResult<T>

type DerivedRun = FromSchema<typeof runSchemaObject>

/**
 * A station run as the run schema admits it, after ajv has filled in the defaults (the step). json-schema-to-ts 3
 * does not read draft 2020-12 `prefixItems`, so the trace point pair of `$defs.tracePoint` is stated here.
 */
export type StationRun = Omit<DerivedRun, 'traces'> & { traces?: StationTrace[] }
export type StationMeasurement = DerivedRun['measurements'][number]
export type StationTrace = { name: string; points: [number, number][] }
export type StationRunBatch = { runs: StationRun[] }

// Some loaders (jiti) hand a JSON import over with the object repeated under `default`.
function jsonModule(m: unknown): AnySchemaObject {
  const o = m as { default?: AnySchemaObject }
  if (!o.default || typeof o.default !== 'object' || !('$schema' in o.default)) return o as AnySchemaObject
  const { default: _wrapped, ...schema } = o.default as AnySchemaObject & { default?: unknown }
  return schema as AnySchemaObject
}

export const runSchema: AnySchemaObject = runSchemaObject as unknown as AnySchemaObject
export const runBatchSchema: AnySchemaObject = runBatchSchemaObject as unknown as AnySchemaObject

// useDefaults writes schema defaults (the run's step) into the validated body in place.
const ajv = new Ajv2020({ strict: true, allErrors: true, useDefaults: true })
addFormats(ajv)
// other bodies may refer to a run by its $id
ajv.addSchema(runSchema)
// Station runs on their own instance that lets non-finite numbers through (JSON's 1e400 parses to Infinity): the
// judgement refuses them with 422 and a reason, with every other value no instrument produces (shared/utils/plausibility.ts).
const runAjv = new Ajv2020({ strict: true, allErrors: true, useDefaults: true, strictNumbers: false })
addFormats(runAjv)
runAjv.addSchema(runSchema)

function escapePointerToken(token: string): string {
  return token.replace(/~/g, '~0').replace(/\//g, '~1')
}

function toValidationError(e: ErrorObject): ValidationError {
  const params = e.params as Record<string, unknown>
  switch (e.keyword) {
    case 'required':
      return { pointer: `${e.instancePath}/${escapePointerToken(String(params.missingProperty))}`, message: 'is required' }
    case 'additionalProperties':
      return { pointer: `${e.instancePath}/${escapePointerToken(String(params.additionalProperty))}`, message: 'is not an allowed property' }
    case 'format':
      return { pointer: e.instancePath, message: `must be a valid ${String(params.format)}` }
    case 'const':
      return { pointer: e.instancePath, message: `must be ${JSON.stringify(params.allowedValue)}` }
    case 'enum':
      return { pointer: e.instancePath, message: `must be one of ${(params.allowedValues as unknown[]).map((v) => JSON.stringify(v)).join(', ')}` }
    default:
      return { pointer: e.instancePath, message: e.message ?? `fails ${e.keyword}` }
  }
}

function mapErrors(errors: readonly ErrorObject[] | null | undefined): ValidationError[] {
  const out: ValidationError[] = []
  const seen = new Set<string>()
  for (const e of errors ?? []) {
    // "must match then schema" only repeats the error reported by the then-branch itself.
    if (e.keyword === 'if') continue
    const mapped = toValidationError(e)
    const key = `${mapped.pointer}\u0000${mapped.message}`
    if (seen.has(key)) continue
    seen.add(key)
    out.push(mapped)
  }
  return out
}

/** Compiles a JSON Schema (draft 2020-12, strict) into a validator with pointer/message errors. */
export function compileSchema<T>(schemaModule: AnySchemaObject, on: Ajv2020 = ajv): Validator<T> {
  const schema = jsonModule(schemaModule)
  // Schemas are shared by $id on one instance so that they can $ref each other; compiling a known $id again reuses it.
  const known = typeof schema.$id === 'string' ? on.getSchema(schema.$id) : undefined
  const validate = known ?? on.compile(schema)
  return (body: unknown) => {
    if (validate(body)) return { ok: true, value: body as T }
    return { ok: false, errors: mapErrors(validate.errors) }
  }
}

export const validateRun: Validator<StationRun> = compileSchema<StationRun>(runSchema, runAjv)
export const validateRunBatch: Validator<StationRunBatch> = compileSchema<StationRunBatch>(runBatchSchema, runAjv)
