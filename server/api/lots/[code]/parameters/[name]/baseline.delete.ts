import { releaseBaseline } from '../../../../../services/analytics/baseline'
import { parseParameterQuery } from '../../../../../utils/parameter-query'

export default defineEventHandler(async (event) => {
  const user = requireUser(event)
  const q = parseParameterQuery(event)
  await releaseBaseline(useDb(), { code: q.code, name: q.name, step: q.step, qualifier: q.qualifier, userId: user.id })
  return { released: true }
})
