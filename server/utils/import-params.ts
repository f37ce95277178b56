import type { H3Event } from 'h3'
import { problem } from './problem'

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i

/** An import job id from the route; anything that is not a UUID cannot name one, so 404. */
export function importJobId(event: H3Event): string {
  const raw = getRouterParam(event, 'id') ?? ''
  if (!UUID.test(raw)) throw problem(404, 'No such import.')
  return raw.toLowerCase()
}
