import { isStored, postRun } from '../../../services/ingest/post-run'

const MAX_BYTES = 1024 * 1024

export default defineEventHandler(async (event) => {
  const station = requireStation(event)
  const body = await readJsonLimited(event, MAX_BYTES)
  const r = await postRun(useDb(), station, body)
  if (isStored(r)) {
    setResponseStatus(event, r.status)
    return r.run
  }
  throw problem(r.status, r.detail, r.errors ? { errors: r.errors } : {})
})
