import { describe, expect, it } from 'vitest'
import { auditChanges } from '../../../shared/utils/audit-diff'

const byPath = (before: unknown, after: unknown) => Object.fromEntries(auditChanges(before, after).map((c) => [c.path, c.change]))

describe('audit entry changes', () => {
  it('marks changed, added, removed and unchanged fields', () => {
    expect(byPath(
      { status: 'valid', note: 'kept', old: 1 },
      { status: 'revoked', note: 'kept', reason: 'drift', signed: { method: 'password', at: '2026-12-02T10:00:00Z' } },
    )).toEqual({ status: 'changed', note: 'same', old: 'removed', reason: 'added', 'signed.method': 'added', 'signed.at': 'added' })
  })

  it('compares lists of records field by field, and lists of plain values whole', () => {
    const before = { limits: [{ name: 'output_power', usl: 13 }, { name: 'supply_current', usl: 0.2 }], steps: ['rf', 'final'] }
    const after = { limits: [{ name: 'output_power', usl: 14 }], steps: ['rf', 'burn-in', 'final'] }
    expect(byPath(before, after)).toEqual({
      'limits.0.name': 'same', 'limits.0.usl': 'changed', 'limits.1.name': 'removed', 'limits.1.usl': 'removed', steps: 'changed',
    })
    const usl = auditChanges(before, after).find((c) => c.path === 'limits.0.usl')!
    expect([usl.before, usl.after]).toEqual([13, 14])
  })

  it('treats a missing side as nothing: a creation adds every field, a deletion removes them', () => {
    expect(byPath(null, { code: 'C-1', active: true })).toEqual({ code: 'added', active: 'added' })
    expect(byPath({ code: 'C-1' }, null)).toEqual({ code: 'removed' })
    expect(auditChanges(null, null)).toEqual([])
  })

  it('a field set to null is still there, and a bare value is one field', () => {
    expect(byPath({ holdReason: 'x' }, { holdReason: null })).toEqual({ holdReason: 'changed' })
    expect(byPath(3, 4)).toEqual({ value: 'changed' })
  })
})
