// Which test_runs ids the floor feed asks for next. Ids are handed out at insert but become visible at commit,
// so a lower id can appear after a higher one: ids skipped over are asked for again for a while.

export type FeedCursor = { lastId: number; gaps: { id: number; since: number }[] }

export const GAP_PATIENCE_MS = 30_000
/** A burst larger than this is not chased id by id. */
const MAX_GAPS = 500

export function startCursor(lastId: number): FeedCursor {
  return { lastId, gaps: [] }
}

/** Advances past the ids just read; ids jumped over are kept as gaps until seen or too old. */
export function advanceCursor(c: FeedCursor, seenIds: readonly number[], now: number): FeedCursor {
  const seen = new Set(seenIds)
  const gaps = c.gaps.filter((g) => !seen.has(g.id) && now - g.since < GAP_PATIENCE_MS)
  let lastId = c.lastId
  const fresh = [...seen].filter((id) => id > c.lastId).sort((a, b) => a - b)
  for (const id of fresh) {
    for (let skipped = lastId + 1; skipped < id && gaps.length < MAX_GAPS; skipped++) gaps.push({ id: skipped, since: now })
    lastId = id
  }
  return { lastId, gaps }
}
