import schema from '../../../shared/schemas/password-change.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { changeOwnPassword } from '../../services/accounts/set-password'

const validate = compileSchema<{ currentPassword: string; newPassword: string }>(schema)

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const body = await readValidBody(event, validate)
  await requireCurrentPassword(event, user, body.currentPassword, '/currentPassword')
  await changeOwnPassword(useDb(), user.id, body.newPassword, hashPassword)
  forgetSessionUser(user.id)
  return { changed: true }
})
