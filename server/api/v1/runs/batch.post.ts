import { isStored, postRun } from '../../../services/ingest/post-run'

const MAX_BYTES = 64 * 1024 * 1024
const MAX_RUNS = 500

export default defineEventHandler(async (event) => {
  const station = requireStation(event)
  const body = await readJsonLimited(event, MAX_BYTES) as { runs?: unknown }
  const runs = body && typeof body === 'object' && !Array.isArray(body) ? body.runs : undefined
  if (!Array.isArray(runs) || runs.length < 1 || runs.length > MAX_RUNS || Object.keys(body).length !== 1) {
    throw problem(400, `The body must be { "runs": [ … ] } with 1 to ${MAX_RUNS} runs.`, { errors: [{ pointer: '/runs', message: `must be an array of 1 to ${MAX_RUNS} runs` }] })
  }
  const db = useDb()
  const results = []
  // in order and one at a time: each run commits or fails on its own, and a retest follows its first attempt
  for (let i = 0; i < runs.length; i++) {
    const item = runs[i] as { id?: unknown }
    try {
      const r = await postRun(db, station, item, `/runs/${i}`)
      const id = typeof item?.id === 'string' ? item.id : null
      results.push(isStored(r) ? { id, status: r.status, run: r.run } : { id, status: r.status, detail: r.detail, errors: r.errors ?? [] })
    } catch (e: any) {
      const unavailable = ['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ETIMEDOUT'].includes(e?.code)
      if (!unavailable) console.error(e)
      results.push({ id: typeof item?.id === 'string' ? item.id : null, status: unavailable ? 503 : 500, detail: unavailable ? 'The database is unavailable; retry this run.' : 'This run could not be stored.' })
    }
  }
  return { results }
})
