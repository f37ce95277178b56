import { customerShipments } from '../../database/repositories/portal'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  // the customer id comes from the account, never from the request
  return { customer: user.customerName, shipments: await customerShipments(useDb(), customerScope(user)!) }
})
