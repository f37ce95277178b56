import { describe, expect, it } from 'vitest'
import {
  advanceCursor, cursorText, eventIds, lateRuns, OVERLAP_MS, parseCursorText, startCursor, type FeedCursor, type RunKey,
} from '../../../server/services/analytics/floor-cursor'

// The floor feed follows runs by the time they were received, never by id density. The simulated database below
// hands out ids as a three-node Galera cluster does (auto_increment_increment = 3, each node its own offset) and
// commits them out of order; a poll reads what it would: the runs after the cursor's key, and the keys of the
// look-back window behind it.
type Stored = RunKey & { committedAt: number }

function poll(stored: Stored[], c: FeedCursor, now: number): { sent: RunKey[]; cursor: FeedCursor } {
  const visible = stored.filter((r) => r.committedAt <= now)
  const after = visible.filter((r) => r.at > c.at || (r.at === c.at && r.id > c.id)).sort((a, b) => a.at - b.at || a.id - b.id)
  const window = visible.filter((r) => r.at >= c.at - OVERLAP_MS && r.at <= c.at)
  const late = lateRuns(c, window)
  const sent = [...late, ...after].map(({ id, at }) => ({ id, at }))
  return { sent, cursor: advanceCursor(c, sent) }
}

describe('floor feed cursor', () => {
  it('sends every run once whatever the ids: strides of 3 from three nodes, committed out of order', () => {
    // node k hands out ids k, k+3, k+6, … ; received at t, committed up to 4 s later, in no order of id
    const stored: Stored[] = []
    const next = [1, 2, 3]
    for (let i = 0; i < 60; i++) {
      const node = (i * 5 + (i >> 2)) % 3
      const id = next[node]!
      next[node] = id + 3
      const at = 10_000 + i * 150
      stored.push({ id, at, committedAt: at + ((i * 37) % 4000) })
    }
    let c = startCursor(0, 0)
    const sent: number[] = []
    for (let now = 10_000; now <= 25_000; now += 500) {
      const r = poll(stored, c, now)
      sent.push(...r.sent.map((x) => x.id))
      c = r.cursor
    }
    expect(sent.length).toBe(60)
    expect(new Set(sent).size).toBe(60)
    expect([...sent].sort((a, b) => a - b)).toEqual(stored.map((r) => r.id).sort((a, b) => a - b))
    // the ids really were interleaved and out of order on the way
    expect(sent).not.toEqual([...sent].sort((a, b) => a - b))
    // nothing is chased: the remembered ids are only those within the window behind the newest
    expect([...c.sent.values()].every((at) => at >= c.at - OVERLAP_MS)).toBe(true)
  })

  it('sends a run whose lower id and earlier time commit after a later one was sent', () => {
    let c = startCursor(0, 0)
    c = advanceCursor(c, [{ id: 9, at: 5000 }])
    // id 6, received before id 9, commits only now
    const late = lateRuns(c, [{ id: 9, at: 5000 }, { id: 6, at: 4990 }])
    expect(late).toEqual([{ id: 6, at: 4990 }])
    c = advanceCursor(c, late)
    expect(c).toMatchObject({ at: 5000, id: 9 })
    expect(lateRuns(c, [{ id: 9, at: 5000 }, { id: 6, at: 4990 }])).toEqual([])
  })

  it('never waits for ids that do not exist: a jump of ids costs nothing and leaves nothing pending', () => {
    const c = advanceCursor(startCursor(0, 0), [{ id: 1, at: 1000 }, { id: 1_000_000, at: 1001 }])
    expect(c).toMatchObject({ at: 1001, id: 1_000_000 })
    expect(c.sent.size).toBe(2)
    expect(lateRuns(c, [{ id: 1, at: 1000 }, { id: 1_000_000, at: 1001 }])).toEqual([])
  })

  it('forgets what it sent once it falls out of the window, and does not look back past it', () => {
    let c = advanceCursor(startCursor(0, 0), [{ id: 3, at: 1000 }])
    c = advanceCursor(c, [{ id: 5, at: 1000 + OVERLAP_MS + 1 }])
    expect([...c.sent.keys()]).toEqual([5])
    expect(lateRuns(c, [{ id: 4, at: 999 }])).toEqual([])
  })

  it('gives each event the highest key sent so far, so a client resumes after everything it has', () => {
    const c = startCursor(5000, 9)
    expect(eventIds(c, [{ id: 6, at: 4990 }, { id: 12, at: 5100 }, { id: 10, at: 5200 }])).toEqual(['5000.9', '5100.12', '5200.10'])
    expect(parseCursorText('5200.10')).toEqual({ at: 5200, id: 10 })
    expect(cursorText({ at: 5200, id: 10 })).toBe('5200.10')
  })

  it('reads nothing but its own cursor text back from a client', () => {
    for (const bad of ['', '12', '1.2.3', '-1.2', 'x.1', '1e3.2', '9'.repeat(16) + '.1', undefined, ['1.2'], 12]) expect(parseCursorText(bad)).toBeUndefined()
  })
})

describe('open stream registry', () => {
  it('closes every tracked stream once, and forgets a stream that ended by itself', async () => {
    const { trackStream, closeAllStreams, openStreamCount } = await import('../../../server/services/analytics/floor-streams')
    const closed: string[] = []
    trackStream(() => closed.push('a'))
    const untrackB = trackStream(() => closed.push('b'))
    trackStream(() => closed.push('c'))
    untrackB()
    expect(openStreamCount()).toBe(2)
    expect(closeAllStreams()).toBe(2)
    expect(closed).toEqual(['a', 'c'])
    expect(closeAllStreams()).toBe(0)
    expect(closed).toEqual(['a', 'c'])
  })
})
