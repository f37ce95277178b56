import schema from '../../../shared/schemas/user-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createUser, type NewUser } from '../../services/users'

const validate = compileSchema<NewUser>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  const user = await createUser(useDb(), actor.id, body, hashPassword)
  setResponseStatus(event, 201)
  return { user }
})
