// /api/search?q=: the text searched for, trimmed; empty or longer than the longest identifier is a 400.
import { firstValue } from './query-values'
import { problem } from './problem'

export const SEARCH_MAX_LENGTH = 64

export function parseSearchQuery(raw: Record<string, unknown>): string {
  const q = (firstValue(raw.q) ?? '').trim()
  if (!q) throw problem(400, 'Type something to search for.', { errors: [{ pointer: '/query/q', message: 'required' }] })
  if (q.length > SEARCH_MAX_LENGTH) throw problem(400, `A search is at most ${SEARCH_MAX_LENGTH} characters.`, { errors: [{ pointer: '/query/q', message: `at most ${SEARCH_MAX_LENGTH} characters` }] })
  return q
}
