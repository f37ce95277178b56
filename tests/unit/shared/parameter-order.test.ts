import { describe, expect, it } from 'vitest'
import { orderParameters } from '../../../shared/utils/parameter-order'

const p = (step: string, label: string, qualifier = 0) => ({ step, name: label.toLowerCase().replace(/ /g, '_'), label, qualifier })
const show = (xs: { step: string; label: string; qualifier: number }[]) => xs.map((x) => `${x.step}:${x.label}${x.qualifier ? `@${x.qualifier}` : ''}`)

describe('parameter order', () => {
  it('follows the product step order, not the alphabet', () => {
    const out = orderParameters([p('final', 'Output power'), p('burn_in', 'Supply current'), p('cold', 'Output power')], ['cold', 'burn_in', 'final'])
    expect(show(out)).toEqual(['cold:Output power', 'burn_in:Supply current', 'final:Output power'])
  })

  it('puts offsets in decade order 100 Hz, 1 kHz, 10 kHz, 100 kHz, 1 MHz (as text, "1 MHz" and "100 kHz" would sort before "10 kHz")', () => {
    const offsets = [1e6, 1e4, 100, 1e5, 1e3]
    const out = orderParameters(offsets.map((q) => p('final', 'Phase noise', q)), ['final'])
    expect(out.map((x) => x.qualifier)).toEqual([100, 1e3, 1e4, 1e5, 1e6])
  })

  it('puts harmonics H2, H3 … H10 numerically (H10 after H9)', () => {
    const out = orderParameters([10, 3, 2, 9].map((q) => p('final', 'Harmonic rejection', q)), ['final'])
    expect(out.map((x) => x.qualifier)).toEqual([2, 3, 9, 10])
  })

  it('groups one measurement before the next within a step and puts unlisted steps last', () => {
    const out = orderParameters([p('x', 'Output power'), p('final', 'Phase noise', 1e3), p('final', 'Output power'), p('final', 'Phase noise', 100)], ['final'])
    expect(show(out)).toEqual(['final:Output power', 'final:Phase noise@100', 'final:Phase noise@1000', 'x:Output power'])
  })

  it('leaves its input as it was', () => {
    const input = [p('final', 'B'), p('final', 'A')]
    orderParameters(input, ['final'])
    expect(input.map((x) => x.label)).toEqual(['B', 'A'])
  })
})
