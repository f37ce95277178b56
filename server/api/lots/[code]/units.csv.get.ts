import { Readable } from 'node:stream'
import { lotUnitsCsv } from '../../../services/lot-views'
import { parseUnitQuery } from '../../../utils/unit-query'

/** The same filtered, sorted list as units.get, as CSV, every unit, streamed as it is read. */
export default defineEventHandler(async (event) => {
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const { query } = parseUnitQuery({ ...getQuery(event), page: undefined, pageSize: undefined, after: undefined })
  const { filename, lines } = await lotUnitsCsv(useDb(), code, query)
  setResponseHeader(event, 'Content-Type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="${filename}"`)
  setResponseHeader(event, 'X-Content-Type-Options', 'nosniff')
  return sendStream(event, Readable.from(lines))
})
