import { unfollow } from '../../../services/alerts/subscriptions'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const id = idParam(event, 'id', 'subscription')
  await unfollow(useDb(), user.id, id)
  return { removed: true }
})
