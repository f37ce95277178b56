import schema from '../../../../shared/schemas/password-reset-confirm.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { confirmPasswordReset, ResetLinkError } from '../../../services/accounts/password-reset'
import { PasswordRuleError } from '../../../services/accounts/set-password'

const validate = compileSchema<{ token: string; newPassword: string }>(schema)

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  try {
    const { userId } = await confirmPasswordReset(useDb(), { token: body.token, newPassword: body.newPassword, address: clientAddress(event) }, hashPassword)
    forgetSessionUser(userId)
    return { changed: true }
  } catch (e) {
    if (e instanceof ResetLinkError) throw problem(410, e.message, { errors: [{ pointer: '/token', message: 'not valid' }] })
    if (e instanceof PasswordRuleError) throw problem(422, e.message, { errors: [{ pointer: e.pointer, message: e.message }] })
    throw e
  }
})
