import { shipmentList } from '../../services/shipments/views'
import { parseShipmentListQuery } from '../../utils/shipment-query'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const customerId = customerScope(user)
  return shipmentList(useDb(), { customerId }, parseShipmentListQuery(getQuery(event), customerId === null))
})
