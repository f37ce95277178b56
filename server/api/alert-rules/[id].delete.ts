import { removeRule } from '../../services/alerts/rules'
import { underRules } from '../../services/rule-error'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = idParam(event, 'id', 'alert rule')
  await underRules(() => removeRule(useDb(), actor.id, id))
  return { removed: true }
})
