import schema from '../../../shared/schemas/shipment-update.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeShipment, type ShipmentFields } from '../../services/shipments/drafts'
import { shipmentDetail } from '../../services/shipments/views'

const validate = compileSchema<Partial<ShipmentFields>>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const body = await readValidBody(event, validate)
  await changeShipment(useDb(), actor.id, id, body)
  return (await shipmentDetail(useDb(), { customerId: null }, id, { page: 1, pageSize: 200 }))!
})
