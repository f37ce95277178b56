import { parameterView } from '../../../../services/analytics/parameter-view'
import { parseParameterQuery } from '../../../../utils/parameter-query'

export default defineEventHandler(async (event) => {
  const q = parseParameterQuery(event)
  const view = await parameterView(useDb(), q)
  if (!view) throw problem(404, `No lot ${q.code}.`)
  return view
})
