import { describe, expect, it } from 'vitest'
import {
  compareSpecLimits, normalizeSpecLimit, specLimitsFromCsv, specLimitsToCsv, validateSpecLimit, validateSpecLimits, type SpecLimitRow,
} from '../../../shared/utils/spec-limits'

const STEPS = ['tune', 'final']

function limit(over: Partial<SpecLimitRow> = {}): SpecLimitRow {
  return normalizeSpecLimit({ step: 'final', name: 'output_power', lsl: 8, usl: 12, target: 10, unit: 'dBm', ...over })
}

const pointers = (errors: { pointer: string }[]) => errors.map((e) => e.pointer)

describe('validateSpecLimit', () => {
  it('accepts a complete limit', () => {
    expect(validateSpecLimit(limit(), STEPS, '/limits/0')).toEqual([])
  })

  it('requires LSL below USL, and refuses equal limits', () => {
    expect(pointers(validateSpecLimit(limit({ lsl: 12, usl: 8, target: null }), STEPS, '/limits/3'))).toEqual(['/limits/3/usl'])
    expect(pointers(validateSpecLimit(limit({ lsl: 10, usl: 10, target: null }), STEPS, '/limits/0'))).toEqual(['/limits/0/usl'])
  })

  it('needs at least one of LSL and USL; one-sided limits are fine', () => {
    expect(pointers(validateSpecLimit(limit({ lsl: null, usl: null, target: null }), STEPS, '/limits/1'))).toEqual(['/limits/1/usl'])
    expect(validateSpecLimit(limit({ lsl: null, target: null }), STEPS, '/x')).toEqual([])
    expect(validateSpecLimit(limit({ usl: null, target: null }), STEPS, '/x')).toEqual([])
  })

  it('checks the unit against the measurement name, and leaves station-defined names free', () => {
    const e = validateSpecLimit(limit({ unit: 'dB' }), STEPS, '/limits/2')
    expect(e).toEqual([{ pointer: '/limits/2/unit', message: 'must be dBm for output_power' }])
    expect(validateSpecLimit(limit({ name: 'bias_voltage', unit: 'V', lsl: 4.5, usl: 5.5, target: 5 }), STEPS, '/x')).toEqual([])
  })

  it('needs a positive offset for phase noise and a whole harmonic ≥ 1 for harmonic rejection', () => {
    const pn = (qualifier: number) => validateSpecLimit(limit({ name: 'phase_noise', unit: 'dBc/Hz', qualifier, lsl: null, usl: -140, target: null }), STEPS, '/limits/0')
    expect(pn(1e4)).toEqual([])
    expect(pointers(pn(0))).toEqual(['/limits/0/qualifier'])
    expect(pointers(pn(-100))).toEqual(['/limits/0/qualifier'])
    const hr = (qualifier: number) => validateSpecLimit(limit({ name: 'harmonic_rejection', unit: 'dB', qualifier, lsl: 30, usl: null, target: null }), STEPS, '/limits/0')
    expect(hr(2)).toEqual([])
    expect(pointers(hr(0))).toEqual(['/limits/0/qualifier'])
    expect(pointers(hr(2.5))).toEqual(['/limits/0/qualifier'])
  })

  it('refuses a qualifier on a name that takes none', () => {
    expect(pointers(validateSpecLimit(limit({ qualifier: 3 }), STEPS, '/limits/0'))).toEqual(['/limits/0/qualifier'])
  })

  it('requires the step to be one of the product steps', () => {
    const e = validateSpecLimit(limit({ step: 'burn-in' }), STEPS, '/limits/5')
    expect(e).toEqual([{ pointer: '/limits/5/step', message: "must be one of this product's steps (tune, final)" }])
  })

  it('keeps the target inside the limits and the uncertainty non-negative', () => {
    expect(pointers(validateSpecLimit(limit({ target: 13 }), STEPS, '/l'))).toEqual(['/l/target'])
    expect(pointers(validateSpecLimit(limit({ defaultUncertainty: -0.1 }), STEPS, '/l'))).toEqual(['/l/defaultUncertainty'])
  })

  it('refuses guard bands that leave no acceptance zone', () => {
    expect(validateSpecLimit(limit({ rule: 'guarded', defaultUncertainty: 1.9 }), STEPS, '/l')).toEqual([])
    expect(pointers(validateSpecLimit(limit({ rule: 'guarded', defaultUncertainty: 2 }), STEPS, '/l'))).toEqual(['/l/defaultUncertainty'])
    // the simple rule ignores the uncertainty, so a wide one is harmless there
    expect(validateSpecLimit(limit({ rule: 'simple', defaultUncertainty: 2 }), STEPS, '/l')).toEqual([])
  })

  it('takes a missing rule as simple but refuses an unknown one', () => {
    const { rule: _rule, ...noRule } = limit()
    expect(validateSpecLimit(noRule, STEPS, '/l')).toEqual([])
    expect(pointers(validateSpecLimit({ ...limit(), rule: 'fuzzy' }, STEPS, '/l'))).toEqual(['/l/rule'])
  })

  it('flags numbers that are not finite, and bad names', () => {
    expect(pointers(validateSpecLimit({ ...limit(), lsl: Number.NaN }, STEPS, '/l'))).toContain('/l/lsl')
    expect(pointers(validateSpecLimit(limit({ name: 'Output Power' }), STEPS, '/l'))).toEqual(['/l/name'])
  })
})

describe('validateSpecLimits', () => {
  it('reports a repeated (step, name, qualifier) on the later row', () => {
    const rows = [
      limit(),
      limit({ name: 'phase_noise', unit: 'dBc/Hz', qualifier: 1e3, lsl: null, usl: -130, target: null }),
      limit({ name: 'phase_noise', unit: 'dBc/Hz', qualifier: 1e4, lsl: null, usl: -140, target: null }),
      limit({ name: 'phase_noise', unit: 'dBc/Hz', qualifier: 1e3, lsl: null, usl: -131, target: null }),
      limit({ step: 'tune' }),
      limit({ lsl: 9 }),
    ]
    const e = validateSpecLimits(rows, STEPS)
    expect(e).toEqual([
      { pointer: '/limits/3/qualifier', message: 'repeats row 2 (same step, name and qualifier)' },
      { pointer: '/limits/5/name', message: 'repeats row 1 (same step, name and qualifier)' },
    ])
  })
})

describe('compareSpecLimits', () => {
  it('tells added, removed and changed limits apart by step, name and qualifier', () => {
    const a = [limit(), limit({ step: 'tune' }), limit({ name: 'supply_current', unit: 'mA', lsl: 40, usl: 80, target: null })]
    const b = [limit({ usl: 11.5 }), limit({ step: 'tune' }), limit({ name: 'frequency_error', unit: 'ppm', lsl: -2, usl: 2, target: 0 })]
    const d = compareSpecLimits(a, b)
    expect(d.added.map((l) => l.name)).toEqual(['frequency_error'])
    expect(d.removed.map((l) => l.name)).toEqual(['supply_current'])
    expect(d.changed).toHaveLength(1)
    expect(d.changed[0]!.fields).toEqual(['usl'])
    expect(d.changed[0]!.before.usl).toBe(12)
    expect(d.changed[0]!.after.usl).toBe(11.5)
    expect(d.unchanged).toBe(1)
  })
})

describe('limit CSV', () => {
  const table: SpecLimitRow[] = [
    limit({ rule: 'guarded', defaultUncertainty: 0.3, key: true }),
    limit({ name: 'phase_noise', unit: 'dBc/Hz', qualifier: 1e5, lsl: null, usl: -149.5, target: null, rule: 'guarded', defaultUncertainty: 1.5 }),
    limit({ name: 'integrated_jitter', unit: 's', lsl: null, usl: 4e-14, target: null, required: false }),
    limit({ step: 'tune', name: 'frequency_error', unit: 'ppm', lsl: -2, usl: 2, target: 0 }),
  ]

  it('round-trips a table exactly', () => {
    const parsed = specLimitsFromCsv(specLimitsToCsv(table), STEPS)
    expect(parsed.errors).toEqual([])
    expect(parsed.rows.map((r) => r.limit)).toEqual(table)
    expect(parsed.rows.map((r) => r.row)).toEqual([2, 3, 4, 5])
  })

  it('writes negative limits as plain numbers a spreadsheet can chart, and only text cells could start a formula', () => {
    const csv = specLimitsToCsv(table)
    expect(csv).toContain(',-149.5,')
    expect(csv).toContain(',-2,2,0,')
    expect(csv).not.toContain("'-")
    expect(csv.split('\r\n')[0]).toBe('step,name,qualifier,lsl,usl,target,unit,required,rule,default_uncertainty,key_characteristic')
    // a cell starting with a formula character is a number: a spreadsheet reads it as a value, never a formula
    for (const line of csv.split('\r\n').slice(1)) for (const cell of line.split(',')) if (/^[=+\-@]/.test(cell)) expect(Number.isFinite(Number(cell))).toBe(true)
  })

  it('numbers the rows of every error and reports them all', () => {
    const csv = [
      'step,name,qualifier,lsl,usl,unit',
      'final,output_power,,8,12,dBm',
      'tune,output_power,,12,8,dBm',
      'final,phase_noise,0,,-140,dBc/Hz',
      'final,supply_current,,abc,80,mA',
      'final,output_power,,8,12,dBm',
    ].join('\n')
    const parsed = specLimitsFromCsv(csv, STEPS)
    expect(parsed.errors.map((e) => [e.row, e.column])).toEqual([[3, 'usl'], [4, 'qualifier'], [5, 'lsl'], [6, 'name']])
    expect(parsed.errors[2]!.message).toBe('must be a number')
    expect(parsed.errors[0]!.pointer).toBe('/limits/1/usl')
    expect(parsed.errors[3]!.message).toBe('repeats row 2 (same step, name and qualifier)')
  })

  it('refuses unknown and missing columns in the header', () => {
    const parsed = specLimitsFromCsv('step,name,colour\nfinal,output_power,red\n', STEPS)
    expect(parsed.rows).toEqual([])
    expect(parsed.errors.map((e) => e.message)).toEqual(['unknown column "colour"', 'the column "unit" is missing'])
    expect(parsed.errors.every((e) => e.row === 1)).toBe(true)
  })

  it('accepts hand-written yes/no and true/false flags and defaults what is left out', () => {
    const parsed = specLimitsFromCsv('name,step,usl,unit,required,key_characteristic\nsupply_current,final,80,mA,false,TRUE\n', STEPS)
    expect(parsed.errors).toEqual([])
    expect(parsed.rows[0]!.limit).toEqual({ step: 'final', name: 'supply_current', qualifier: 0, lsl: null, usl: 80, target: null, unit: 'mA', required: false, rule: 'simple', defaultUncertainty: null, key: true })
  })
})
