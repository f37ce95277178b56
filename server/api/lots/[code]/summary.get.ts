import { lotSummary } from '../../../services/analytics/lot-summary'

export default defineEventHandler(async (event) => {
  const code = decodeURIComponent(getRouterParam(event, 'code') ?? '')
  const attempts = getQuery(event).attempts
  if (attempts !== undefined && attempts !== 'first' && attempts !== 'all') throw problem(400, 'attempts must be "first" or "all".', { errors: [{ pointer: '/attempts', message: 'must be first or all' }] })
  const summary = await lotSummary(useDb(), code, (attempts as 'first' | 'all') ?? 'first')
  if (!summary) throw problem(404, `No lot ${code}.`)
  return summary
})
