import { customerDetail } from '../../services/customers'

export default defineEventHandler(async (event) => {
  const customer = await customerDetail(useDb(), idParam(event, 'id', 'customer'))
  if (!customer) throw problem(404, 'No such customer.')
  return { customer }
})
