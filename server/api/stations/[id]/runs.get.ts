import { stationRecentRuns } from '../../../services/stations'

export default defineEventHandler(async (event) => {
  const id = Number(getRouterParam(event, 'id'))
  const runs = Number.isInteger(id) && id > 0 ? await stationRecentRuns(useDb(), id) : undefined
  if (!runs) throw problem(404, 'No such station.')
  return { runs }
})
