import { endSession } from '../../utils/session'

/** Ends this browser's session (the user's other sessions go on; see POST /api/me/sign-out-everywhere). */
export default defineEventHandler(async (event) => {
  await endSession(event)
  setResponseStatus(event, 204)
  return null
})
