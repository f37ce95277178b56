import { retestPolicy } from '../../../services/retest'

export default defineEventHandler(async (event) => {
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  return retestPolicy(useDb(), partNumber)
})
