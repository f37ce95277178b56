// The draft limit editor's checks as the author types: every row is parsed from its text cells and refused with a
// message at the cell (LSL not below USL, text where a number belongs, required fields missing).
import { describe, expect, it } from 'vitest'
import { nextTick, ref } from 'vue'
import { useLimitEditor } from '~/composables/specs/useLimitEditor'
import type { SpecLimitRow } from '#shared/utils/spec-limits'

const STEPS = ['tune', 'final']
const POWER: SpecLimitRow = {
  step: 'final', name: 'output_power', qualifier: 0, lsl: 12, usl: 15, target: null, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: false,
}

function editor(saved: SpecLimitRow[] = [POWER]) {
  return useLimitEditor(ref(7), ref(saved), ref(STEPS), async () => {})
}

describe('useLimitEditor', () => {
  it('shows the saved limits as text and finds nothing wrong with them', () => {
    const e = editor()
    expect(e.rows.value).toHaveLength(1)
    expect(e.rows.value[0]).toMatchObject({ step: 'final', name: 'output_power', lsl: '12', usl: '15', unit: 'dBm' })
    expect(e.liveErrors.value).toEqual([])
    expect(e.dirty.value).toBe(false)
  })

  it('refuses an LSL above the USL, at the USL cell, and accepts it once the limits are put right', async () => {
    const e = editor()
    e.rows.value[0]!.lsl = '16'
    await nextTick()
    expect(e.dirty.value).toBe(true)
    expect(e.cellError.value['0/usl']).toBe('must be above the LSL (16)')
    expect(e.errorList.value).toContain('Row 1 · USL: must be above the LSL (16)')
    // equal limits leave no acceptance zone either
    e.rows.value[0]!.lsl = '15'
    await nextTick()
    expect(e.cellError.value['0/usl']).toBe('must be above the LSL (15)')
    e.rows.value[0]!.lsl = '14.5'
    await nextTick()
    expect(e.liveErrors.value).toEqual([])
    expect(e.parsed.value[0]).toMatchObject({ lsl: 14.5, usl: 15 })
  })

  it('refuses text that is not a number in each numeric cell', async () => {
    const e = editor()
    Object.assign(e.rows.value[0]!, { lsl: '12,5', usl: 'abc', target: '1e', defaultUncertainty: '0.1 dB' })
    await nextTick()
    for (const f of ['lsl', 'usl', 'target', 'defaultUncertainty']) expect(e.cellError.value[`0/${f}`], f).toBe('must be a number')
    expect(e.errorList.value).toContain('Row 1 · LSL: must be a number')
    expect(e.errorList.value).toContain('Row 1 · Default U: must be a number')
  })

  it('asks for the required fields of a new row, and for at least one limit', async () => {
    const e = editor()
    e.addRow()
    await nextTick()
    expect(e.rows.value).toHaveLength(2)
    expect(e.rows.value[1]!.step).toBe('final') // a new row starts at the last step
    expect(e.cellError.value['1/name']).toBe('is required')
    expect(e.cellError.value['1/unit']).toBe('is required')
    expect(e.cellError.value['1/usl']).toBe('set an LSL, a USL or both')
    expect(e.cellError.value['0/name']).toBeUndefined()
    // naming a known measurement fills in its unit
    e.rows.value[1]!.name = 'phase_noise'
    e.onName(e.rows.value[1]!)
    e.rows.value[1]!.usl = '-140'
    await nextTick()
    expect(e.rows.value[1]!.unit).toBe('dBc/Hz')
    expect(e.cellError.value['1/unit']).toBeUndefined()
    expect(e.cellError.value['1/usl']).toBeUndefined()
    // phase noise is given at an offset, which is then required
    expect(e.cellError.value['1/qualifier']).toBe('must be a positive offset in Hz')
    e.rows.value[1]!.qualifier = '10k'
    await nextTick()
    expect(e.liveErrors.value).toEqual([])
    expect(e.parsed.value[1]).toMatchObject({ qualifier: 10_000, usl: -140 })
  })
})
