import schema from '../../../shared/schemas/user-create.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { createUser, UserRuleError, type NewUser } from '../../services/users'

const validate = compileSchema<NewUser>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const body = await readValidBody(event, validate)
  try {
    const user = await createUser(useDb(), actor.id, body, hashPassword)
    setResponseStatus(event, 201)
    return { user }
  } catch (e) {
    if (e instanceof UserRuleError) throw problem(422, e.message, { errors: [{ pointer: e.pointer, message: e.message }] })
    if ((e as any)?.code === 'ER_DUP_ENTRY') throw problem(409, 'A user with this e-mail address already exists.', { errors: [{ pointer: '/email', message: 'already in use' }] })
    throw e
  }
})
