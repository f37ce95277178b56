import schema from '../../../../../shared/schemas/customer-contact.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { addContact, type ContactInput } from '../../../../services/customers'

const validate = compileSchema<ContactInput>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'customer')
  const body = await readValidBody(event, validate)
  const contact = await addContact(useDb(), actor.id, id, body)
  setResponseStatus(event, 201)
  return { contact }
})
