import { changeLotStatus } from '../../../services/lot-status'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const status = await changeLotStatus(useDb(), actor.id, code, 'resume')
  return { code, status }
})
