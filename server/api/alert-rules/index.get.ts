import { rulesList } from '../../services/alerts/rules'
import { kindParam } from '../../utils/alert-query'

export default defineEventHandler(async (event) => {
  const q = getQuery(event)
  const partNumber = typeof q.product === 'string' && q.product ? q.product : undefined
  return rulesList(useDb(), { partNumber, kind: kindParam(q) })
})
