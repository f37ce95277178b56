import { engineeringPattern } from '../../../services/lot-kind'

export default defineEventHandler(async (event) => {
  const partNumber = getRouterParam(event, 'partNumber', { decode: true }) ?? ''
  return engineeringPattern(useDb(), partNumber)
})
