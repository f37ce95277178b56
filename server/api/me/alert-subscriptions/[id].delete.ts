import { unfollow } from '../../../services/alerts/subscriptions'
import { underRules } from '../../../services/rule-error'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'subscription')
  await underRules(() => unfollow(useDb(), user.id, id))
  return { removed: true }
})
