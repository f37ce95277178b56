import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { levelRunEnds, type XY } from '../../../app/utils/level-runs'

// the y of a polyline at x, by linear interpolation between its points (x increasing)
function yAt(line: XY[], x: number): number {
  for (let i = 1; i < line.length; i++) {
    const a = line[i - 1]!; const b = line[i]!
    if (x <= b.x) return a.y + ((b.y - a.y) * (x - a.x)) / (b.x - a.x)
  }
  return line[line.length - 1]!.y
}

describe('level run ends', () => {
  it('keeps the ends of each level run and every point where the value changes', () => {
    const ys = [1, 2, 3, 3, 3, 3, 4, 4, 5]
    expect(levelRunEnds(ys.map((y, x) => ({ x, y }))).map((p) => p.x)).toEqual([0, 1, 2, 5, 6, 7, 8])
  })

  it('draws the same line as the whole series, at every point of it', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: 0, max: 3 }), { minLength: 1, maxLength: 200 }), (ys) => {
      const whole = ys.map((y, x) => ({ x, y }))
      const kept = levelRunEnds(whole)
      expect(kept[0]).toEqual(whole[0])
      expect(kept[kept.length - 1]).toEqual(whole[whole.length - 1])
      for (const p of whole) expect(yAt(kept, p.x)).toBe(p.y)
    }))
  })
})
