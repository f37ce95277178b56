import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import { guardBandWidth, hasLimit, judge, type Limit } from '../../../shared/utils/decision'

// Worked case quoted with the ILAC-G8:09/2019 guard-band table (Harper Metrology post): spec 10 ± 1, U = 0.2.
const simple: Limit = { lsl: 9, usl: 11, rule: 'simple', defaultUncertainty: null }
const guarded: Limit = { ...simple, rule: 'guarded' }
const U = 0.2

describe('hasLimit', () => {
  it('is false only when neither limit is set', () => {
    expect(hasLimit({ lsl: null, usl: null })).toBe(false)
    expect(hasLimit(null)).toBe(false)
    expect(hasLimit({ lsl: 0, usl: null })).toBe(true)
    expect(hasLimit({ lsl: null, usl: -3 })).toBe(true)
  })

  it('judge refuses a limit without lsl and usl, which the caller reports as information only', () => {
    expect(() => judge(1, { lsl: null, usl: null, rule: 'simple', defaultUncertainty: null })).toThrow(/information/)
  })
})

describe('simple acceptance (ILAC-G8 §4.2.1, w = 0)', () => {
  it('passes inside the tolerance interval including both limits', () => {
    expect(judge(9, simple).verdict).toBe('pass')
    expect(judge(11, simple).verdict).toBe('pass')
    expect(judge(10, simple).verdict).toBe('pass')
    expect(judge(11.000001, simple).verdict).toBe('fail')
    expect(judge(8.999999, simple).verdict).toBe('fail')
  })

  it('has no guard zone when there is no uncertainty', () => {
    expect(judge(11, simple)).toEqual({ verdict: 'pass', guardBand: 0, zone: 'inside' })
    expect(judge(11.1, simple)).toEqual({ verdict: 'fail', guardBand: 0, zone: 'outside' })
  })
})

describe('guarded acceptance with w = U (ILAC-G8 §4.2.2)', () => {
  it('acceptance interval for spec 10 ± 1, U = 0.2 is 9.200–10.800, ends included', () => {
    expect(judge(9.2, guarded, U).verdict).toBe('pass')
    expect(judge(10.8, guarded, U).verdict).toBe('pass')
    expect(judge(9.2 - 1e-9, guarded, U).verdict).toBe('fail')
    expect(judge(10.8 + 1e-9, guarded, U).verdict).toBe('fail')
    expect(judge(10, guarded, U)).toEqual({ verdict: 'pass', guardBand: U, zone: 'inside' })
  })

  it.each([
    // Guard-band factors r of the ILAC-G8:09/2019 risk table; the interval is [LSL + rU, USL − rU].
    [0.83, 9.166, 10.834],
    [1.5, 9.3, 10.7],
    [3, 9.6, 10.4],
  ])('w = %f·U gives the acceptance interval %f–%f', (r, lo, hi) => {
    const w = r * U
    expect(judge(lo + 1e-9, guarded, w).verdict).toBe('pass')
    expect(judge(hi - 1e-9, guarded, w).verdict).toBe('pass')
    expect(judge(lo - 1e-9, guarded, w).verdict).toBe('fail')
    expect(judge(hi + 1e-9, guarded, w).verdict).toBe('fail')
  })

  it('simple and guarded rules differ only inside the guard band', () => {
    const cases: [number, 'pass' | 'fail', 'pass' | 'fail', 'inside' | 'guard' | 'outside'][] = [
      [10, 'pass', 'pass', 'inside'],
      [10.8, 'pass', 'pass', 'inside'],
      [10.9, 'pass', 'fail', 'guard'],
      [11, 'pass', 'fail', 'guard'],
      [11.1, 'fail', 'fail', 'guard'],
      [11.2, 'fail', 'fail', 'guard'],
      [11.3, 'fail', 'fail', 'outside'],
      [9.1, 'pass', 'fail', 'guard'],
      [8.85, 'fail', 'fail', 'guard'],
      [8.7, 'fail', 'fail', 'outside'],
    ]
    for (const [value, simpleVerdict, guardedVerdict, zone] of cases) {
      expect(judge(value, simple, U), `simple ${value}`).toEqual({ verdict: simpleVerdict, guardBand: U, zone })
      expect(judge(value, guarded, U), `guarded ${value}`).toEqual({ verdict: guardedVerdict, guardBand: U, zone })
    }
  })

  it('the maximum probability of false acceptance at the acceptance limit for w = U is Φ(−2) = 0.02275', () => {
    // A result accepted exactly at AL = USL − U, with normal errors of standard uncertainty u = U/2,
    // has its true value beyond USL with probability 1 − Φ((USL − AL)/u) = Φ(−2). Any result further
    // inside is less likely to be out, so this is the worst case for an accepted part (ILAC-G8: PFA < 2.5 %).
    const u = U / 2
    const al = 10.8
    expect(judge(al, guarded, U).verdict).toBe('pass')
    const pfa = 1 - jStat.normal.cdf(11, al, u)
    expect(pfa).toBeCloseTo(0.02275, 5)
    expect(jStat.normal.cdf(-2, 0, 1)).toBeCloseTo(0.02275, 5)
    expect(pfa).toBeLessThan(0.025)
    // Under simple acceptance the worst accepted result sits on the limit itself: PFA 50 %.
    expect(judge(11, simple, U).verdict).toBe('pass')
    expect(1 - jStat.normal.cdf(11, 11, u)).toBeCloseTo(0.5, 12)
  })

  it.each([
    [0.83, 0.04846],
    [1.5, 0.00135],
    [3, 9.87e-10],
  ])('w = %f·U bounds PFA by Φ(−2r) = %f', (r, pfa) => {
    const u = U / 2
    const al = 11 - r * U
    expect(judge(al - 1e-12, guarded, r * U).verdict).toBe('pass')
    expect((1 - jStat.normal.cdf(11, al, u)) / pfa).toBeCloseTo(1, 2)
  })
})

describe('one-sided limits', () => {
  const maxOnly: Limit = { lsl: null, usl: -30, rule: 'guarded', defaultUncertainty: null }
  const minOnly: Limit = { lsl: 13, usl: null, rule: 'guarded', defaultUncertainty: null }

  it('upper limit only (e.g. a spurious level at most −30 dBc)', () => {
    expect(judge(-1e9, maxOnly, 1).verdict).toBe('pass')
    expect(judge(-31, maxOnly, 1)).toEqual({ verdict: 'pass', guardBand: 1, zone: 'inside' })
    expect(judge(-30.5, maxOnly, 1)).toEqual({ verdict: 'fail', guardBand: 1, zone: 'guard' })
    expect(judge(-29.5, maxOnly, 1)).toEqual({ verdict: 'fail', guardBand: 1, zone: 'guard' })
    expect(judge(-28.9, maxOnly, 1)).toEqual({ verdict: 'fail', guardBand: 1, zone: 'outside' })
    expect(judge(-30.5, { ...maxOnly, rule: 'simple' }, 1).verdict).toBe('pass')
  })

  it('lower limit only (e.g. output power at least 13 dBm)', () => {
    expect(judge(1e9, minOnly, 0.5).verdict).toBe('pass')
    expect(judge(13.5, minOnly, 0.5)).toEqual({ verdict: 'pass', guardBand: 0.5, zone: 'inside' })
    expect(judge(13.2, minOnly, 0.5)).toEqual({ verdict: 'fail', guardBand: 0.5, zone: 'guard' })
    expect(judge(12.4, minOnly, 0.5)).toEqual({ verdict: 'fail', guardBand: 0.5, zone: 'outside' })
  })
})

describe('guard band width', () => {
  const withDefault: Limit = { ...guarded, defaultUncertainty: 0.3 }

  it("uses the result's U, else the limit's default, else 0", () => {
    expect(guardBandWidth(withDefault, 0.1)).toBe(0.1)
    expect(guardBandWidth(withDefault, 0)).toBe(0)
    expect(guardBandWidth(withDefault, null)).toBe(0.3)
    expect(guardBandWidth(withDefault)).toBe(0.3)
    expect(guardBandWidth(guarded)).toBe(0)
    expect(judge(10.75, withDefault).verdict).toBe('fail')
    expect(judge(10.75, withDefault, 0.1).verdict).toBe('pass')
  })

  it('a guard band wider than half the tolerance leaves nothing to accept', () => {
    expect(judge(10, guarded, 1.5)).toEqual({ verdict: 'fail', guardBand: 1.5, zone: 'guard' })
    expect(judge(10, simple, 1.5).verdict).toBe('pass')
  })

  it('rejects negative or non-finite uncertainties', () => {
    expect(() => judge(10, guarded, -0.1)).toThrow(RangeError)
    expect(() => judge(10, guarded, Number.NaN)).toThrow(RangeError)
    expect(() => judge(10, { ...guarded, defaultUncertainty: -1 })).toThrow(RangeError)
  })
})

describe('values that are not numbers', () => {
  it.each([Number.NaN, Infinity, -Infinity])('%f fails under both rules', (v) => {
    expect(judge(v, simple, U)).toEqual({ verdict: 'fail', guardBand: U, zone: 'outside' })
    expect(judge(v, guarded, U).verdict).toBe('fail')
    expect(judge(v, { lsl: null, usl: 5, rule: 'simple', defaultUncertainty: null }).verdict).toBe('fail')
  })
})

describe('malformed limits', () => {
  it('rejects lsl above usl', () => {
    expect(() => judge(1, { lsl: 2, usl: 1, rule: 'simple', defaultUncertainty: null })).toThrow(RangeError)
  })
})
