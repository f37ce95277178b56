import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { columnExtremes, columnPeaks } from '../../../app/utils/plot-columns'

type P = { x: number; y: number }
const thin = (ps: P[], columns: number) => columnExtremes(ps, (p) => p.x, (p) => p.y, columns)

// a series in increasing x (gaps allowed, as a population with units left out has) with values that may repeat
const series = fc.array(fc.tuple(fc.integer({ min: 1, max: 5 }), fc.integer({ min: -50, max: 50 })), { minLength: 1, maxLength: 600 })
  .map((steps) => { let x = 0; return steps.map(([dx, y]) => ({ x: (x += dx), y })) })

describe('a line thinned to the plot columns', () => {
  it('keeps a short series whole', () => {
    const ps = Array.from({ length: 22 }, (_, x) => ({ x, y: x % 3 }))
    expect(thin(ps, 10)).toEqual(ps)
  })

  it('keeps the lowest and highest point of each column, in order, with both ends', () => {
    // 40 points in 4 columns (width 39 / 4): column c holds x = 10c … 10c + 9
    const ps = Array.from({ length: 40 }, (_, x) => ({ x, y: (x * 7) % 11 }))
    const kept = thin(ps, 4)
    // y = 7x mod 11: each column of ten holds one 0 and one 10
    expect(kept.map((p) => p.x)).toEqual([0, 3, 11, 14, 22, 25, 33, 36, 39])
  })

  it('reaches every column’s extremes, keeps the ends and draws only points of the series, in x order', () => {
    fc.assert(fc.property(series, fc.integer({ min: 1, max: 60 }), (ps, columns) => {
      const kept = thin(ps, columns)
      expect(kept.length).toBeLessThanOrEqual(Math.max(ps.length, 2 * columns + 2))
      expect(kept[0]).toBe(ps[0])
      expect(kept[kept.length - 1]).toBe(ps[ps.length - 1])
      for (let i = 1; i < kept.length; i++) expect(kept[i]!.x).toBeGreaterThan(kept[i - 1]!.x)
      for (const p of kept) expect(ps).toContain(p)
      if (ps.length <= 2 * columns + 2) return
      const x0 = ps[0]!.x
      const width = (ps[ps.length - 1]!.x - x0) / columns
      const colOf = (p: P) => (width > 0 ? Math.min(columns - 1, Math.floor((p.x - x0) / width)) : 0)
      for (let c = 0; c < columns; c++) {
        const inCol = ps.filter((p) => colOf(p) === c)
        if (!inCol.length) continue
        const ys = kept.filter((p) => colOf(p) === c).map((p) => p.y)
        expect(Math.min(...ys)).toBe(Math.min(...inCol.map((p) => p.y)))
        expect(Math.max(...ys)).toBe(Math.max(...inCol.map((p) => p.y)))
      }
    }))
  })
})

describe('marks thinned to the plot columns', () => {
  const peaks = (ps: P[], span: { min: number; max: number }, columns: number) => columnPeaks(ps, (p) => p.x, (p) => Math.abs(p.y), span, columns)

  it('keeps few marks whole and, per column, the one farthest out', () => {
    const few = [{ x: 1, y: 3 }, { x: 2, y: -9 }]
    expect(peaks(few, { min: 0, max: 10 }, 2)).toEqual(few)
    // columns of width 5 over 0 … 10: x 0–4.9 and 5–10
    const ps = [{ x: 1, y: 3 }, { x: 2, y: -9 }, { x: 4, y: 8 }, { x: 6, y: 1 }, { x: 9, y: -2 }]
    expect(peaks(ps, { min: 0, max: 10 }, 2)).toEqual([{ x: 2, y: -9 }, { x: 9, y: -2 }])
  })

  it('leaves no column that had marks without one, and takes the farthest of each', () => {
    fc.assert(fc.property(series, fc.integer({ min: 1, max: 40 }), (ps, columns) => {
      const span = { min: ps[0]!.x - 1, max: ps[ps.length - 1]!.x + 1 }
      const kept = peaks(ps, span, columns)
      for (const p of kept) expect(ps).toContain(p)
      for (let i = 1; i < kept.length; i++) expect(kept[i]!.x).toBeGreaterThan(kept[i - 1]!.x)
      if (ps.length <= columns) { expect(kept).toEqual(ps); return }
      const width = (span.max - span.min) / columns
      const colOf = (p: P) => Math.min(columns - 1, Math.floor((p.x - span.min) / width))
      const cols = new Set(ps.map(colOf))
      expect(kept.map(colOf)).toEqual([...cols].sort((a, b) => a - b))
      for (const p of kept) expect(Math.abs(p.y)).toBe(Math.max(...ps.filter((q) => colOf(q) === colOf(p)).map((q) => Math.abs(q.y))))
    }))
  })
})
