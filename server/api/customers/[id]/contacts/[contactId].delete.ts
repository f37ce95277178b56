import { removeContact } from '../../../../services/customers'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'customer')
  const contactId = idParam(event, 'contactId', 'contact')
  await removeContact(useDb(), actor.id, id, contactId)
  return { removed: true }
})
