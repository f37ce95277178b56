import { shipmentDetail } from '../../services/shipments/views'
import { underRules } from '../../services/rule-error'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'shipment')
  const detail = await underRules(() => shipmentDetail(useDb(), { customerId: customerScope(user) }, id, getQuery(event)))
  if (!detail) throw problem(404, 'No such shipment.')
  return detail
})
