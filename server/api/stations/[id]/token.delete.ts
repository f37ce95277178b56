import { revokeStationTokens } from '../../../services/stations'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  const result = Number.isInteger(id) && id > 0 ? await revokeStationTokens(useDb(), actor.id, id) : undefined
  if (!result) throw problem(404, 'No such station.')
  return result
})
