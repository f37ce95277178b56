import { describe, expect, it } from 'vitest'
import { counted } from '../../../app/utils/count-words'

describe('counted', () => {
  it('uses the singular for exactly one and groups thousands', () => {
    expect(counted(1, 'row')).toBe('1 row')
    expect(counted(0, 'row')).toBe('0 rows')
    // grouped as every number in Tercet is: a narrow no-break space (SI Brochure 5.4.4), four digits kept whole
    expect(counted(12_500, 'unit')).toBe('12\u202F500 units')
    expect(counted(1500, 'unit')).toBe('1500 units')
    expect(counted(1, 'entry', 'entries')).toBe('1 entry')
    expect(counted(3, 'entry', 'entries')).toBe('3 entries')
  })
})
