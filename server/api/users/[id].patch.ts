import schema from '../../../shared/schemas/user-update.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeUser, UserRuleError, type UserChange } from '../../services/users'

const validate = compileSchema<UserChange>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  if (!Number.isInteger(id) || id < 1) throw problem(404, 'No such user.')
  const body = await readValidBody(event, validate)
  try {
    const user = await changeUser(useDb(), actor.id, id, body, hashPassword)
    if (!user) throw problem(404, 'No such user.')
    forgetSessionUser(id)
    return { user }
  } catch (e) {
    if (e instanceof UserRuleError) throw problem(422, e.message, { errors: [{ pointer: e.pointer, message: e.message }] })
    throw e
  }
})
