import { shipmentDetail } from '../../services/shipments/views'
import { parseShipmentUnitsPage } from '../../utils/shipment-query'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const detail = await shipmentDetail(useDb(), { customerId: customerScope(user) }, id, parseShipmentUnitsPage(getQuery(event)))
  if (!detail) throw problem(404, 'No such shipment.')
  return detail
})
