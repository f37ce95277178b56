import { findStationByName, type ImportFormat } from '../../database/repositories/imports'
import { importJobView, startImport } from '../../services/imports'
import { MAX_FILE_BYTES } from '../../services/import-upload'
import { displayFileName } from '../../../shared/utils/upload-text'
import type { ImportStarted } from '../../../shared/types/imports'

const FORMATS: ImportFormat[] = ['jsonl', 'csv']
// what browsers and tools label such files with; '' and octet-stream say nothing, and the content is sniffed anyway
const TYPES: Record<ImportFormat, string[]> = {
  jsonl: ['', 'application/octet-stream', 'application/x-ndjson', 'application/jsonl', 'application/x-jsonlines', 'application/json-lines', 'text/plain'],
  csv: ['', 'application/octet-stream', ...CSV_TYPES],
}

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

  if (mediaTypeOf(event).startsWith('multipart/')) throw problem(415, 'Send the file itself as the request body, not as a form.')
  requireMediaType(event, TYPES[format], format === 'csv' ? 'a CSV file (text/csv)' : 'a JSON Lines file (application/x-ndjson)')
  requireDeclaredLength(event, MAX_FILE_BYTES)
  refuseContentEncoding(event)

  const db = useDb()
  const station = await findStationByName(db, stationName)
  if (!station) throw problem(400, `There is no station named "${stationName}".`, { errors: [{ pointer: '', message: 'query parameter "station": no such station' }] })

  // the client's name for its file is kept as data only, to show; the upload itself goes to the database
  const fileName = displayFileName(q.fileName, `upload.${format}`, 255)
  const job = await startImport(db, { userId: user.id, station, fileName, format }, event.node.req)
  setResponseStatus(event, 202)
  setResponseHeader(event, 'Location', `/api/imports/${job.id}`)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  return { jobId: job.id, job: importJobView(job) }
})
