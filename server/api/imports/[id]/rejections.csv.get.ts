import { Readable } from 'node:stream'
import { csvLine } from '../../../../shared/utils/csv'
import { REJECTION_CSV_HEADER, rejectionCsvLine } from '../../../../shared/utils/run-csv'
import { findImportJob, listRejections } from '../../../database/repositories/imports'
import { importJobId } from '../../../utils/import-params'

const PAGE = 1000

/** Every rejected line of the job, read page by page so that a long list is never held whole. */
export default defineEventHandler(async (event) => {
  const id = importJobId(event)
  const db = useDb()
  const job = await findImportJob(db, id)
  if (!job) throw problem(404, 'No such import.')
  async function* rows() {
    yield csvLine(REJECTION_CSV_HEADER) + '\r\n'
    let after = 0
    for (;;) {
      const page = await listRejections(db, id, PAGE, after)
      if (!page.length) return
      yield page.map(rejectionCsvLine).join('')
      after = page[page.length - 1]!.seq
    }
  }
  setResponseHeader(event, 'Content-Type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'Content-Disposition', `attachment; filename="import-${id.slice(0, 8)}-rejections.csv"`)
  setResponseHeader(event, 'X-Content-Type-Options', 'nosniff')
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return sendStream(event, Readable.from(rows()))
})
