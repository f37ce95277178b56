import { describe, expect, it } from 'vitest'
import { signWindowMs, signedByRecentSignIn } from '../../../server/utils/signature'

const MIN = 60_000

describe('signing by a recent sign-in', () => {
  const at = Date.UTC(2026, 11, 2, 9, 0, 0)
  it('counts a sign-in for five minutes by default, and not a moment longer', () => {
    const w = signWindowMs({})
    expect(w).toBe(5 * MIN)
    expect(signedByRecentSignIn(at, at, w)).toBe(true)
    expect(signedByRecentSignIn(at, at + 5 * MIN - 1, w)).toBe(true)
    expect(signedByRecentSignIn(at, at + 5 * MIN, w)).toBe(false)
    expect(signedByRecentSignIn(at, at + 6 * MIN, w)).toBe(false)
  })
  it('never counts a missing or future sign-in time', () => {
    expect(signedByRecentSignIn(undefined, at, 5 * MIN)).toBe(false)
    expect(signedByRecentSignIn(at + 1000, at, 5 * MIN)).toBe(false)
    expect(signedByRecentSignIn(Number.NaN, at, 5 * MIN)).toBe(false)
  })
  it('reads the window from TERCET_SIGN_WINDOW_S', () => {
    expect(signWindowMs({ TERCET_SIGN_WINDOW_S: '1' })).toBe(1000)
    expect(signWindowMs({ TERCET_SIGN_WINDOW_S: 'soon' })).toBe(5 * MIN)
  })
})
