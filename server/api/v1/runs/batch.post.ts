import { ingestBatch } from '../../../services/ingest/ingest-batch'

const MAX_BYTES = 64 * 1024 * 1024
const MAX_RUNS = 500

export default defineEventHandler(async (event) => {
  const station = requireStation(event)
  const body = await readJsonLimited(event, MAX_BYTES) as { runs?: unknown }
  const runs = body && typeof body === 'object' && !Array.isArray(body) ? body.runs : undefined
  if (!Array.isArray(runs) || runs.length < 1 || runs.length > MAX_RUNS || Object.keys(body).length !== 1) {
    throw problem(400, `The body must be { "runs": [ … ] } with 1 to ${MAX_RUNS} runs.`, { errors: [{ pointer: '/runs', message: `must be an array of 1 to ${MAX_RUNS} runs` }] })
  }
  return { results: await ingestBatch(useDb(), station, runs) }
})
