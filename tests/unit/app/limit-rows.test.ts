import { describe, expect, it } from 'vitest'
import { fromEditRow, toEditRow } from '../../../app/utils/limit-rows'
import type { SpecLimitRow } from '../../../shared/utils/spec-limits'

const jitter: SpecLimitRow = { step: 'final', name: 'integrated_jitter', qualifier: 0, lsl: null, usl: 4e-14, target: null, unit: 's', required: true, rule: 'guarded', defaultUncertainty: 2e-15, key: false }
const power: SpecLimitRow = { step: 'final', name: 'output_power', qualifier: 0, lsl: 7, usl: 10.5, target: 8.5, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: 0.3, key: true }

// 1 fs = 1e-15 s (SI prefix femto): a jitter limit of 40 fs is stored as 4e-14 s.
describe('limit editor rows', () => {
  it('shows a stored jitter limit in fs and stores what is typed in fs as seconds', () => {
    const row = toEditRow(jitter, 1)
    expect(row).toMatchObject({ unit: 'fs', usl: '40', defaultUncertainty: '2', lsl: '' })
    expect(fromEditRow({ ...row, usl: '45', defaultUncertainty: '2.5' })).toMatchObject({ unit: 's', usl: 4.5e-14, defaultUncertainty: 2.5e-15, lsl: null })
  })
  it('gives back exactly the stored limit when nothing was changed, so the editor is not dirty', () => {
    expect(fromEditRow(toEditRow(jitter, 1))).toEqual(jitter)
    expect(fromEditRow(toEditRow(power, 2))).toEqual(power)
  })
  it('leaves units shown as stored untouched', () => {
    const row = toEditRow(power, 3)
    expect(row).toMatchObject({ unit: 'dBm', lsl: '7', usl: '10.5' })
    expect(fromEditRow({ ...row, lsl: '-1.25' }).lsl).toBe(-1.25)
  })
  it('reads offsets with a prefix', () => {
    const pn: SpecLimitRow = { ...power, name: 'phase_noise', qualifier: 10_000, unit: 'dBc/Hz', lsl: null, usl: -120, target: null }
    expect(toEditRow(pn, 4).qualifier).toBe('10k')
    expect(fromEditRow({ ...toEditRow(pn, 4), qualifier: '1 MHz' }).qualifier).toBe(1_000_000)
  })
})
