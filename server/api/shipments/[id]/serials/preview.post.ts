import schema from '../../../../../shared/schemas/shipment-serials.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { MAX_LIST_BODY_BYTES, previewSerials, type SerialRequest } from '../../../../services/shipments/serials'

const validate = compileSchema<SerialRequest>(schema)

export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidUpload(event, validate, MAX_LIST_BODY_BYTES)
  return previewSerials(useDb(), id, body)
})
