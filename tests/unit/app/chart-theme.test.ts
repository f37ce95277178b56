import { describe, expect, it } from 'vitest'
import tailwind from '../../../tailwind.config'
import { indexSpan, indexSpanOf, INK, legendOf, limitLegend, MONO, SANS, seriesStyle, themed, yLimits, type Drawn } from '../../../app/utils/chart-theme'

const colours = tailwind.theme!.extend!.colors as Record<string, Record<string, string>>

describe('chart theme', () => {
  it('takes its colours and type from the palette in tailwind.config.ts', () => {
    expect(INK).toBe(colours.ink!.DEFAULT)
    expect(SANS.startsWith('Inter')).toBe(true)
    expect(MONO).toContain('Roboto Mono')
    const o = themed({ chart: { height: 200 }, xaxis: { title: { text: 'x' } }, yaxis: [{ title: { text: 'a' } }, { title: { text: 'b' } }] })
    expect(o.legend?.show).toBe(false)
    expect(o.chart?.fontFamily).toBe(SANS)
    expect(o.grid?.borderColor).toBe(colours.ink!.rule)
    expect((o.yaxis as { labels?: { style?: { fontFamily?: string } } }[])[1]!.labels?.style?.fontFamily).toBe(MONO)
  })

  it('draws limits dashed and traces solid, and the legend glyphs say the same', () => {
    const drawn: Drawn[] = [
      { name: 'value', look: { kind: 'trace', color: '#111111' } },
      { name: 'limit', look: { kind: 'limit', color: '#222222' } },
      { name: 'hits', look: { kind: 'points', color: '#333333', shape: 'triangle' } },
    ]
    const style = seriesStyle(drawn)
    const dash = style.stroke!.dashArray as number[]
    expect(dash[0]).toBe(0)
    expect(dash[1]).toBeGreaterThan(0)
    expect((style.markers!.shape as string[])[2]).toBe('triangle')
    expect((style.stroke!.width as number[])[2]).toBe(0)
    const glyphs = legendOf(drawn).map((e) => e.glyph)
    expect(glyphs[0]).toMatchObject({ kind: 'line', dash: 0 })
    expect(glyphs[1]).toMatchObject({ kind: 'line' })
    expect((glyphs[1] as { dash: number }).dash).toBeGreaterThan(0)
    expect(glyphs[2]).toMatchObject({ kind: 'marker', shape: 'triangle' })
  })

  it('keys limits sharing a legend text once, and names limits without a box, pushed apart when close', () => {
    const lines = [
      { value: 10, label: 'USL', legend: 'specification limits' },
      { value: 9.9, label: 'UCL', legend: 'control limits' },
      { value: 0, label: 'LSL', legend: 'specification limits' },
      { value: null, label: 'target' },
    ]
    expect(limitLegend(lines).map((e) => e.label)).toEqual(['specification limits', 'control limits'])
    const annotations = yLimits(lines, { min: 0, max: 10, plotHeight: 200 })
    expect(annotations).toHaveLength(3)
    for (const a of annotations) {
      expect(a.label).toMatchObject({ borderWidth: 0, style: { background: 'transparent' } })
    }
    // 10 and 9.9 are 2 px apart on a 200 px plot: their names end up at least a line of text apart
    const [usl, ucl] = annotations as { label: { offsetY: number } }[]
    const at = (v: number, a: { label: { offsetY: number } }) => ((10 - v) / 10) * 200 + a.label.offsetY
    expect(at(9.9, ucl!) - at(10, usl!)).toBeGreaterThanOrEqual(11)
  })

  it('runs an axis of units in test order on whole ticks past the last unit', () => {
    for (const n of [1, 5, 22, 72, 100, 250, 1000]) {
      const s = indexSpan(n)
      const step = (s.max - s.min) / s.tickAmount
      expect(s.min).toBe(0)
      expect(s.max).toBeGreaterThan(n)
      expect(Number.isInteger(step)).toBe(true)
      expect(s.tickAmount).toBeLessThanOrEqual(16)
    }
    expect(indexSpan(72).max).toBe(75)
  })

  it('gives the last points of a large lot an axis of their own stretch, not one from 0', () => {
    // the last 2,000 of 374,068 units in test order (0-based positions 372,068 … 374,067)
    const points = Array.from({ length: 2000 }, (_, i) => ({ index: 372_068 + i }))
    const s = indexSpanOf(points)
    const step = (s.max - s.min) / s.tickAmount
    expect(s.min).toBeGreaterThan(370_000)
    expect(s.min).toBeLessThan(372_069)
    expect(s.max).toBeGreaterThan(374_068)
    expect(s.max - s.min).toBeLessThan(3000)
    expect(Number.isInteger(step)).toBe(true)
    expect(s.tickAmount).toBeLessThanOrEqual(16)
    expect(indexSpanOf(points.slice(0, 0))).toEqual(indexSpan(1))
  })
})
