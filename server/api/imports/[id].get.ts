import { findImportJob, listRejections } from '../../database/repositories/imports'
import { importJobView } from '../../services/imports'
import { importJobId } from '../../utils/import-params'
import type { ImportJobDetail } from '../../../shared/types/imports'

/** The job and its first rejected lines (?rejections=N, 0–1000, default 100); every one is in rejections.csv. */
export default defineEventHandler(async (event): Promise<ImportJobDetail> => {
  const id = importJobId(event)
  const raw = getQuery(event).rejections
  const limit = raw === undefined ? 100 : Number(raw)
  if (!Number.isInteger(limit) || limit < 0 || limit > 1000) {
    throw problem(400, 'rejections must be a whole number from 0 to 1000.', { errors: [{ pointer: '', message: 'query parameter "rejections": 0 to 1000' }] })
  }
  const db = useDb()
  const job = await findImportJob(db, id)
  if (!job) throw problem(404, 'No such import.')
  const rejections = limit ? (await listRejections(db, id, limit)).map(({ seq: _seq, ...r }) => r) : []
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return { ...importJobView(job), rejections }
})
