import { describe, expect, it } from 'vitest'
import { limitsSource } from '../../../app/utils/analytics-format'

describe('limitsSource', () => {
  it('names the part, revision and approval date the limits come from', () => {
    expect(limitsSource('VFW-T3-375', [{ revision: 4, approvedAt: '2026-11-03T08:15:00.000Z' }])).toBe('Limits: VFW-T3-375 rev. 4, approved 2026-11-03')
  })
  it('lists every revision when several apply', () => {
    expect(limitsSource('VFW-T3-375', [{ revision: 3, approvedAt: '2026-10-01T00:00:00.000Z' }, { revision: 4, approvedAt: '2026-11-03T00:00:00.000Z' }]))
      .toBe('Limits: VFW-T3-375 rev. 3 (approved 2026-10-01) and rev. 4 (approved 2026-11-03)')
  })
  it('says so when values were stored without a revision', () => {
    expect(limitsSource('VFW-T3-375', [{ revision: null }])).toBe('Limits: none (values stored without a specification revision)')
  })
})
