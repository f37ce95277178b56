import { rotateStationToken } from '../../../services/stations'

export default defineEventHandler(async (event) => {
  const actor = requireUser(event)
  const id = Number(getRouterParam(event, 'id'))
  const issued = Number.isInteger(id) && id > 0 ? await rotateStationToken(useDb(), actor.id, id) : undefined
  if (!issued) throw problem(404, 'No such station.')
  setResponseStatus(event, 201)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return issued
})
