import loginSchema from '../../../shared/schemas/login.schema.json'
import { LANDING } from '../../../shared/utils/roles'
import { compileSchema } from '../../utils/run-validator'
import { touchSignIn } from '../../database/repositories/users'
import { verifySignIn } from '../../utils/current-password'
import { startSession } from '../../utils/session'

const validate = compileSchema<{ email: string; password: string }>(loginSchema)

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  const user = await verifySignIn(event, body.email.trim().toLowerCase(), body.password)
  await touchSignIn(useDb(), user.id)
  return { user: await startSession(event, user), landing: LANDING[user.role] }
})
