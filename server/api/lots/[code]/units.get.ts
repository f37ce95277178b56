import { lotUnitsPage } from '../../../services/lot-views'
import { underRules } from '../../../services/rule-error'

/** The lot's units, one page at a time: ?page, pageSize, sort, dir, serial, verdict, minAttempts, station, from, to. */
export default defineEventHandler(async (event) => {
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  return underRules(() => lotUnitsPage(useDb(), code, getQuery(event)))
})
