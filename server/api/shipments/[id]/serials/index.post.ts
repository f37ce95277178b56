import schema from '../../../../../shared/schemas/shipment-serials.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { addSerials, type SerialRequest } from '../../../../services/shipments/serials'
import { underRules } from '../../../../services/rule-error'

const validate = compileSchema<SerialRequest>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  return underRules(() => addSerials(useDb(), actor.id, id, body))
})
