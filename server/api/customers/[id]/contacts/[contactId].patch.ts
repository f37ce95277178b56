import schema from '../../../../../shared/schemas/customer-contact-update.schema.json'
import { compileSchema } from '../../../../utils/run-validator'
import { changeContact, type ContactInput } from '../../../../services/customers'

const validate = compileSchema<Partial<ContactInput>>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'customer')
  const contactId = idParam(event, 'contactId', 'contact')
  const body = await readValidBody(event, validate)
  return { contact: await changeContact(useDb(), actor.id, id, contactId, body) }
})
