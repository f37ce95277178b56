import { lotUnitsPage } from '../../../services/lot-views'
import { parseUnitQuery } from '../../../utils/unit-query'

/** The lot's units, one page at a time: ?page, pageSize, sort, dir, serial, verdict, minAttempts, station, from, to. */
export default defineEventHandler(async (event) => {
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  return lotUnitsPage(useDb(), code, parseUnitQuery(getQuery(event)))
})
