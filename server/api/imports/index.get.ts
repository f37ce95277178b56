import { listImportJobs } from '../../database/repositories/imports'
import { importJobView } from '../../services/imports'
import type { ImportList } from '../../../shared/types/imports'

export default defineEventHandler(async (event): Promise<ImportList> => {
  setResponseHeader(event, 'Cache-Control', 'no-store')
  const now = new Date()
  return { imports: (await listImportJobs(useDb(), 50)).map((j) => importJobView(j, now)) }
})
