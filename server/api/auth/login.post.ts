import loginSchema from '../../../shared/schemas/login.schema.json'
import { LANDING } from '../../../shared/utils/roles'
import { compileSchema } from '../../utils/run-validator'
import { findUserForSignIn, touchSignIn } from '../../database/repositories/users'
import { signInFailuresByAccount, signInFailuresByAddress } from '../../utils/rate-limit'

const validate = compileSchema<{ email: string; password: string }>(loginSchema)

export default defineEventHandler(async (event) => {
  const body = await readValidBody(event, validate)
  const email = body.email.trim().toLowerCase()
  const address = clientAddress(event)
  const wait = Math.max(signInFailuresByAccount.retryAfter(email), signInFailuresByAddress.retryAfter(address))
  if (wait > 0) throw problem(429, `Too many failed sign-in attempts; try again in ${wait} s.`, { headers: { 'Retry-After': String(wait) } })

  const user = await findUserForSignIn(useDb(), email)
  const ok = user && !user.disabled && await verifyPassword(user.passwordHash, body.password)
  if (!ok || !user) {
    signInFailuresByAccount.fail(email)
    signInFailuresByAddress.fail(address)
    throw problem(401, 'The e-mail address or password is not correct, or the account is disabled.')
  }
  signInFailuresByAccount.clear(email)
  await touchSignIn(useDb(), user.id)
  const sessionUser = { id: user.id, email: user.email, name: user.name, role: user.role, customerId: user.customerId }
  await setUserSession(event, { user: sessionUser, loggedInAt: Date.now() })
  return { user: sessionUser, landing: LANDING[user.role] }
})
