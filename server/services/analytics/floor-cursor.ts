// Where the floor feed has read up to. Runs are followed by the time Tercet received them (test_runs.received_at, set
// by the database at insert, indexed), never by id density: on a Galera cluster ids are handed out interleaved across
// nodes (auto_increment_increment = the cluster's size), so skipped ids are normal and most never appear. A run becomes
// visible only when its transaction commits, which can be after runs received later: each poll also looks back over
// OVERLAP_MS behind the highest time read and sends the runs there it has not sent yet, remembering what it sent in
// that window only.

export type RunKey = { id: number; at: number }

/** The highest (received at, id) read, and the ids sent whose time lies within the look-back window behind it. */
export type FeedCursor = { at: number; id: number; sent: Map<number, number> }

/** A run committed this long after it was received is still sent (a long transaction, a cluster node applying late). */
export const OVERLAP_MS = 30_000

export function startCursor(at: number, id: number, sent: readonly RunKey[] = []): FeedCursor {
  return { at, id, sent: new Map(sent.filter((r) => r.at >= at - OVERLAP_MS).map((r) => [r.id, r.at])) }
}

/** Whether key a comes after key b in feed order (received at, then id). */
export function keyAfter(a: RunKey, b: { at: number; id: number }): boolean {
  return a.at > b.at || (a.at === b.at && a.id > b.id)
}

/** The start of the look-back window. */
export function windowStart(c: FeedCursor): number {
  return c.at - OVERLAP_MS
}

/** Of the runs seen in the look-back window, those at or before the cursor not sent yet: they committed late. */
export function lateRuns(c: FeedCursor, inWindow: readonly RunKey[]): RunKey[] {
  return inWindow.filter((r) => r.at >= windowStart(c) && !keyAfter(r, c) && !c.sent.has(r.id))
}

/** The cursor after sending `sent` (late runs and new ones, in any order): the highest key moves up, the window with it. */
export function advanceCursor(c: FeedCursor, sent: readonly RunKey[]): FeedCursor {
  let top = { at: c.at, id: c.id }
  for (const r of sent) if (keyAfter(r, top)) top = { at: r.at, id: r.id }
  const keep = new Map<number, number>()
  for (const [id, at] of c.sent) if (at >= top.at - OVERLAP_MS) keep.set(id, at)
  for (const r of sent) if (r.at >= top.at - OVERLAP_MS) keep.set(r.id, r.at)
  return { ...top, sent: keep }
}

/**
 * The event ids of runs sent in this order: each the highest key sent so far on the stream, so a client that
 * reconnects with the last one it received (Last-Event-ID) resumes after everything it has.
 */
export function eventIds(c: FeedCursor, runs: readonly RunKey[]): string[] {
  let top = { at: c.at, id: c.id }
  return runs.map((r) => { if (keyAfter(r, top)) top = { at: r.at, id: r.id }; return cursorText(top) })
}

export function cursorText(k: { at: number; id: number }): string {
  return `${k.at}.${k.id}`
}

/** A cursor text as a client sends it back; anything else (hostile, from an older build) is not a cursor. */
export function parseCursorText(text: unknown): { at: number; id: number } | undefined {
  if (typeof text !== 'string') return undefined
  const m = /^(\d{1,15})\.(\d{1,15})$/.exec(text.trim())
  if (!m) return undefined
  const at = Number(m[1])
  const id = Number(m[2])
  return Number.isSafeInteger(at) && Number.isSafeInteger(id) ? { at, id } : undefined
}
