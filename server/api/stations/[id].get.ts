import { stationDetail } from '../../services/stations'

export default defineEventHandler(async (event) => {
  const id = Number(getRouterParam(event, 'id'))
  const station = Number.isInteger(id) && id > 0 ? await stationDetail(useDb(), id) : undefined
  if (!station) throw problem(404, 'No such station.')
  return { station }
})
