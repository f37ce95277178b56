import { alertPage } from '../../services/alerts/firings'
import { underRules } from '../../services/rule-error'
import { alertListParams } from '../../utils/alert-query'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const params = alertListParams(getQuery(event))
  return underRules(() => alertPage(useDb(), user.id, params))
})
