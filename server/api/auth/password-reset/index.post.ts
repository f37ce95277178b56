import schema from '../../../../shared/schemas/password-reset-request.schema.json'
import { compileSchema } from '../../../utils/run-validator'
import { requestPasswordReset } from '../../../services/accounts/password-reset'
import { hashEmailKey } from '../../../services/accounts/reset-token'
import { sendResetLink } from '../../../services/accounts/reset-mail'
import { makerIdentity } from '../../../services/certificates/maker'
import { enforceKeyLimit, resetAddressLimit, resetEmailLimit } from '../../../utils/request-limit'

const validate = compileSchema<{ email: string }>(schema)

const RESET_ANSWER = 'If an account uses this address, a link to set a new password is on its way. It works for 30 minutes.'

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  const address = clientAddress(event)
  await enforceKeyLimit(address, resetAddressLimit())
  await enforceKeyLimit(hashEmailKey(body.email), resetEmailLimit(), new Date(), 'Too many requests for this address; try again later.')
  await requestPasswordReset(useDb(), { email: body.email, address, siteUrl: makerIdentity().siteUrl }, sendResetLink)
  setResponseStatus(event, 202)
  return { detail: RESET_ANSWER }
})
