import schema from '../../../../shared/schemas/calibration-record.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { addCalibration, type NewCalibration } from '../../../services/calibration/history'

const validate = oneMessagePerDateField(compileSchema<NewCalibration>(schema), ['calibratedOn', 'dueAt'])
// a 5 MiB certificate is about 7 MB in base64; the document's own limit is checked (with its pointer) by the service
const MAX_BYTES = 8 * 1024 * 1024

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'instrument')
  const r = validate(await readJsonLimited(event, MAX_BYTES))
  if (!r.ok) throw problem(400, 'The request body does not match the schema.', { errors: r.errors })
  const record = await addCalibration(useDb(), actor.id, id, r.value)
  setResponseStatus(event, 201)
  return { record }
})
