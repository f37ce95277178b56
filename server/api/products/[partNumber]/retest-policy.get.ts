import { retestPolicy } from '../../../services/retest'
import { underRules } from '../../../services/rule-error'

export default defineEventHandler(async (event) => {
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  return underRules(() => retestPolicy(useDb(), partNumber))
})
