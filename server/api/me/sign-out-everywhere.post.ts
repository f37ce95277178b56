import schema from '../../../shared/schemas/sign-out-everywhere.schema.json'
import { compileSchema } from '../../utils/run-validator'
import { endEverySession } from '../../services/accounts/sessions'
import { endSession } from '../../utils/session'

const validate = compileSchema<{ password: string }>(schema)

/** Ends every session of the signed-in user, this one included; the password confirms it is the owner asking. */
export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const body = await readValidBody(event, validate)
  await requireCurrentPassword(event, user, body.password, '/password')
  await endEverySession(useDb(), user.id)
  await endSession(event)
  setResponseStatus(event, 204)
  return null
})
