import { floorRunDetail } from '../../../services/analytics/floor-run'

export default defineEventHandler(async (event) => {
  const id = Number(getRouterParam(event, 'id'))
  const run = Number.isSafeInteger(id) && id > 0 ? await floorRunDetail(useDb(), id) : null
  if (!run) throw problem(404, 'No run with this id.')
  return run
})
