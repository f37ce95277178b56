import { changeLotStatus } from '../../../services/lot-status'
import { underRules } from '../../../services/rule-error'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const status = await underRules(() => changeLotStatus(useDb(), actor.id, code, 'resume'))
  return { code, status }
})
