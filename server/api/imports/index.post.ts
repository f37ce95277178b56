import { findStationByName, type ImportFormat } from '../../database/repositories/imports'
import { importJobView, startImport } from '../../services/imports'
import type { ImportStarted } from '../../../shared/types/imports'

const FORMATS: ImportFormat[] = ['jsonl', 'csv']

function queryText(v: unknown): string {
  return typeof v === 'string' ? v.trim() : ''
}

/** Takes a .jsonl or .csv file of past runs as the raw request body; 202 with the job once it is received whole. */
export default defineEventHandler(async (event): Promise<ImportStarted> => {
  const user = requireUser(event)
  const q = getQuery(event)
  const stationName = queryText(q.station)
  const format = queryText(q.format) as ImportFormat
  const errors: { pointer: string; message: string }[] = []
  if (!stationName) errors.push({ pointer: '', message: 'query parameter "station" is required (a station name)' })
  if (!FORMATS.includes(format)) errors.push({ pointer: '', message: 'query parameter "format" must be jsonl or csv' })
  if (errors.length) throw problem(400, 'Name the station the runs belong to and the file format.', { errors })

  const type = (getHeader(event, 'content-type') ?? '').toLowerCase()
  if (type.startsWith('multipart/')) throw problem(415, 'Send the file itself as the request body, not as a form.')

  const db = useDb()
  const station = await findStationByName(db, stationName)
  if (!station) throw problem(400, `There is no station named "${stationName}".`, { errors: [{ pointer: '', message: 'query parameter "station": no such station' }] })

  // eslint-disable-next-line no-control-regex -- control characters are exactly what a stored file name must lose
  const fileName = (queryText(q.fileName).replace(/[\u0000-\u001f\\/]/g, '_').slice(0, 255)) || `upload.${format}`
  const job = await startImport(db, { userId: user.id, station, fileName, format }, event.node.req)
  setResponseStatus(event, 202)
  setResponseHeader(event, 'Location', `/api/imports/${job.id}`)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return { jobId: job.id, job: importJobView(job) }
})
