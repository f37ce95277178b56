import schema from '../../../../shared/schemas/station-instruments.schema.json'
import { compileSchema, type Validator } from '../../../utils/run-validator'
import { invalidateStationCache } from '../../../services/ingest/caches'
import { replaceStationInstruments, StationRuleError, type InstrumentListInput } from '../../../services/stations'

const DUE_MESSAGE = 'must be a date (YYYY-MM-DD) or a date-time with a time zone'
const strict = compileSchema<InstrumentListInput>(schema)

// The date-or-date-time choice fails three ways at once; the editor needs one message per field.
const validate: Validator<InstrumentListInput> = (body) => {
  const r = strict(body)
  if (r.ok) return r
  const due = new Set(r.errors.filter((e) => e.pointer.endsWith('/calibrationDue') && e.message !== 'is required').map((e) => e.pointer))
  const rest = r.errors.filter((e) => !due.has(e.pointer))
  return { ok: false, errors: [...rest, ...[...due].map((pointer) => ({ pointer, message: DUE_MESSAGE }))] }
}

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  if (!Number.isInteger(id) || id < 1) throw problem(404, 'No such station.')
  const body = await readValidBody(event, validate)
  try {
    const station = await replaceStationInstruments(useDb(), actor.id, id, body)
    if (!station) throw problem(404, 'No such station.')
    invalidateStationCache(id)
    return { station }
  } catch (e) {
    if (e instanceof StationRuleError) throw problem(e.status, e.message, { errors: [{ pointer: e.pointer, message: e.message }] })
    throw e
  }
})
