import { describe, expect, it } from 'vitest'
import { advanceCursor, GAP_PATIENCE_MS, startCursor } from '../../../server/services/analytics/floor-cursor'

describe('floor feed cursor', () => {
  it('moves to the highest id seen', () => {
    const c = advanceCursor(startCursor(10), [11, 12, 13], 0)
    expect(c).toEqual({ lastId: 13, gaps: [] })
  })

  it('keeps ids it jumped over, and drops them once they arrive', () => {
    let c = advanceCursor(startCursor(10), [11, 14], 1000)
    expect(c.lastId).toBe(14)
    expect(c.gaps.map((g) => g.id)).toEqual([12, 13])
    c = advanceCursor(c, [13], 2000)
    expect(c.gaps.map((g) => g.id)).toEqual([12])
    expect(c.lastId).toBe(14)
  })

  it('gives up on a gap after a while (a rolled-back insert never commits)', () => {
    let c = advanceCursor(startCursor(0), [2], 0)
    expect(c.gaps.map((g) => g.id)).toEqual([1])
    c = advanceCursor(c, [], GAP_PATIENCE_MS - 1)
    expect(c.gaps).toHaveLength(1)
    c = advanceCursor(c, [], GAP_PATIENCE_MS)
    expect(c.gaps).toHaveLength(0)
  })

  it('does not move back for a late low id and ignores an empty poll', () => {
    const c = advanceCursor(startCursor(50), [], 0)
    expect(c).toEqual({ lastId: 50, gaps: [] })
    expect(advanceCursor(startCursor(50), [7], 0).lastId).toBe(50)
  })

  it('bounds the gaps kept after a huge jump', () => {
    const c = advanceCursor(startCursor(0), [1_000_000], 0)
    expect(c.lastId).toBe(1_000_000)
    expect(c.gaps.length).toBeLessThanOrEqual(500)
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
