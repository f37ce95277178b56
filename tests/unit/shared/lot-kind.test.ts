import { describe, expect, it } from 'vitest'
import { matchesLotPattern, normaliseLotPatterns, parseLotPatterns } from '../../../shared/utils/lot-kind'

describe('engineering lot patterns', () => {
  it('matches whole codes with * for any run and ? for one character, ignoring case', () => {
    expect(matchesLotPattern('ENG-0042', ['ENG-*'])).toBe(true)
    expect(matchesLotPattern('eng-0042', ['ENG-*'])).toBe(true)
    expect(matchesLotPattern('ENG-', ['ENG-*'])).toBe(true)
    expect(matchesLotPattern('X-ENG-1', ['ENG-*'])).toBe(false)
    expect(matchesLotPattern('X8-2612-E', ['*-E'])).toBe(true)
    expect(matchesLotPattern('X8-2612-EB', ['*-E'])).toBe(false)
    expect(matchesLotPattern('T3-2612-B', ['T3-2?12-*'])).toBe(true)
    expect(matchesLotPattern('T3-212-B', ['T3-2?12-*'])).toBe(false)
  })

  it('treats dots and dashes as themselves, not as expression syntax', () => {
    expect(matchesLotPattern('A.B', ['A.B'])).toBe(true)
    expect(matchesLotPattern('AxB', ['A.B'])).toBe(false)
  })

  it('marks nothing without patterns and any match among several', () => {
    expect(matchesLotPattern('ENG-1', [])).toBe(false)
    expect(matchesLotPattern('TRIAL-7', ['ENG-*', 'TRIAL-*'])).toBe(true)
  })

  it('reads a comma-separated setting and names what is wrong', () => {
    expect(parseLotPatterns(' ENG-* ,  *-E ')).toEqual({ patterns: ['ENG-*', '*-E'], problems: [] })
    expect(parseLotPatterns('').patterns).toEqual([])
    expect(parseLotPatterns(null).patterns).toEqual([])
    expect(parseLotPatterns('*').problems[0]).toMatch(/every lot/)
    expect(parseLotPatterns('ENG %').problems[0]).toMatch(/letters, digits/)
    expect(parseLotPatterns('ENG-*, eng-*').problems).toContain('a pattern is listed twice')
    expect(parseLotPatterns(Array.from({ length: 9 }, (_, i) => `E${i}-*`).join(',')).problems).toContain('at most 8 patterns')
    expect(normaliseLotPatterns(['ENG-*', '*-E'])).toBe('ENG-*, *-E')
    expect(normaliseLotPatterns([])).toBeNull()
  })
})
