import schema from '../../../shared/schemas/customer-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createCustomer, type CustomerFields } from '../../services/customers'

const validate = compileSchema<CustomerFields>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const customer = await createCustomer(useDb(), actor.id, body)
  setResponseStatus(event, 201)
  return { customer }
})
