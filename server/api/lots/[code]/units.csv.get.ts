import { lotUnitsForCsv } from '../../../services/lot-views'
import { parseUnitQuery } from '../../../utils/unit-query'
import { toCsvDocument } from '../../../../shared/utils/csv'

/** The same filtered, sorted list as units.get, as CSV, without paging. */
export default defineEventHandler(async (event) => {
  const code = getRouterParam(event, 'code', { decode: true }) ?? ''
  const { query } = parseUnitQuery({ ...getQuery(event), page: undefined, pageSize: undefined })
  const { rows } = await lotUnitsForCsv(useDb(), code, query)
  const csv = toCsvDocument(
    ['serial', 'verdict', 'first_pass', 'steps_tested', 'last_step', 'max_attempts', 'runs', 'station', 'last_tested_at'],
    rows.map((u) => [u.serial, u.verdict, u.firstPass == null ? '' : u.firstPass ? 'yes' : 'no', u.stepsTested, u.lastStep, u.maxAttempts, u.runs, u.station, u.lastTestedAt ? new Date(u.lastTestedAt).toISOString() : '']),
  )
  setResponseHeader(event, 'Content-Type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="${code.replace(/[^A-Za-z0-9._-]/g, '_')}-units.csv"`)
  setResponseHeader(event, 'X-Content-Type-Options', 'nosniff')
  return csv
})
