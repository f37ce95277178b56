import type { H3Event } from 'h3'
import { problem } from './problem'

/** A positive integer route parameter; anything else cannot name a record, so 404. */
export function idParam(event: H3Event, name: string, what: string): number {
  const raw = getRouterParam(event, name) ?? ''
  const id = Number(raw)
  if (!/^\d{1,10}$/.test(raw) || !Number.isSafeInteger(id) || id < 1) throw problem(404, `No such ${what}.`)
  return id
}
