import { alertPage } from '../../services/alerts/firings'
import { alertListParams } from '../../utils/alert-query'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const params = alertListParams(getQuery(event))
  return alertPage(useDb(), user.id, params)
})
