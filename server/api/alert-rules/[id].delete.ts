import { removeRule } from '../../services/alerts/rules'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'alert rule')
  await removeRule(useDb(), actor.id, id)
  return { removed: true }
})
