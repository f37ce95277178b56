import schema from '../../../../shared/schemas/password-reset-confirm.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { confirmPasswordReset } from '../../../services/accounts/password-reset'

const validate = compileSchema<{ token: string; newPassword: string }>(schema)

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  const { userId } = await confirmPasswordReset(useDb(), { token: body.token, newPassword: body.newPassword, address: clientAddress(event) }, hashPassword)
  forgetSessionUser(userId)
  return { changed: true }
})
