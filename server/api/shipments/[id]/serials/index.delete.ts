import schema from '../../../../../shared/schemas/shipment-serials-remove.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { removeSerials, type RemoveRequest } from '../../../../services/shipments/serials'

const validate = compileSchema<RemoveRequest>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  return removeSerials(useDb(), actor.id, id, body)
})
