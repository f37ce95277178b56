import schema from '../../../shared/schemas/customer-update.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeCustomer, type CustomerChange } from '../../services/customers'

const validate = compileSchema<CustomerChange>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'customer')
  const body = await readValidBody(event, validate)
  return { customer: await changeCustomer(useDb(), actor.id, id, body) }
})
