import schema from '../../../../shared/schemas/shipment-dispatch.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { dispatchShipment, type DispatchInput } from '../../../services/shipments/dispatch'

const validate = compileSchema<DispatchInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  return dispatchShipment(useDb(), actor.id, id, body)
})
