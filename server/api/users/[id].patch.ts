import schema from '../../../shared/schemas/user-update.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeUser, type UserChange } from '../../services/users'
import { currentSessionVersion, keepSession } from '../../utils/session'

const validate = compileSchema<UserChange>(schema)

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  if (!Number.isInteger(id) || id < 1) throw problem(404, 'No such user.')
  const body = await readValidBody(event, validate)
  const user = await changeUser(useDb(), actor.id, id, body, hashPassword)
  if (!user) throw problem(404, 'No such user.')
  // a new password ends the user's sessions; an administrator setting their own keeps the session doing it
  if (id === actor.id && body.password) await keepSession(event, await currentSessionVersion(id))
  return { user }
})
