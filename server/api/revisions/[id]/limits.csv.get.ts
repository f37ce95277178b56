import { idParam } from '../../../utils/route-params'
import { findRevision, listLimitsOf } from '../../../database/repositories/spec-revisions'
import { specLimitsToCsv } from '../../../../shared/utils/spec-limits'

export default defineEventHandler(async (event) => {
  const id = idParam(event, 'id', 'revision')
  const db = useDb()
  const revision = await findRevision(db, id)
  if (!revision) throw problem(404, 'No such revision.')
  const csv = specLimitsToCsv(await listLimitsOf(db, id))
  setResponseHeader(event, 'Content-Type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="${revision.partNumber}-rev${revision.revision}-limits.csv"`)
  setResponseHeader(event, 'X-Content-Type-Options', 'nosniff')
  return csv
})
