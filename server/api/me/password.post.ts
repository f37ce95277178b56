import schema from '../../../shared/schemas/password-change.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeOwnPassword } from '../../services/accounts/set-password'
import { keepSession } from '../../utils/session'

const validate = compileSchema<{ currentPassword: string; newPassword: string }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const body = await readValidBody(event, validate)
  await requireCurrentPassword(event, user, body.currentPassword, '/currentPassword')
  const { sessionVersion } = await changeOwnPassword(useDb(), user.id, body.newPassword, hashPassword)
  // the user's other sessions have ended; this one lives on with a cookie carrying the new version
  await keepSession(event, sessionVersion)
  return { changed: true }
})
