import schema from '../../../shared/schemas/shipment-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createShipment, type ShipmentFields } from '../../services/shipments/drafts'
import { shipmentDetail } from '../../services/shipments/views'

const validate = compileSchema<ShipmentFields>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const { id } = await createShipment(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  return (await shipmentDetail(useDb(), { customerId: null }, id))!
})
