import { shipmentList } from '../../services/shipments/views'
import { underRules } from '../../services/rule-error'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  return underRules(() => shipmentList(useDb(), { customerId: customerScope(user) }, getQuery(event)))
})
