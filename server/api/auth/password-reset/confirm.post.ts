import schema from '../../../../shared/schemas/password-reset-confirm.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { confirmPasswordReset } from '../../../services/accounts/password-reset'

const validate = compileSchema<{ token: string; newPassword: string }>(schema)

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  // the new password ends every session of the user (session version raised in the same transaction)
  await confirmPasswordReset(useDb(), { token: body.token, newPassword: body.newPassword, address: clientAddress(event) }, hashPassword)
  return { changed: true }
})
