import { describe, expect, it } from 'vitest'
import { maskChartPoints, traceChartPoints, traceMaskMargin, type ChartPoint, type TracePoint } from '../../../shared/utils/phase-noise-mask'
import type { MaskPoint } from '../../../shared/utils/phase-noise-plot'
import { gaussian, mulberry32 } from '../helpers/prng'

// What a chart shows between two drawn points is the straight segment joining them (on the chart's log10 axis).
// A drawn line's height at x is therefore read here by straight interpolation between its drawn points, independent
// of how the judge computes its limit; where nothing is drawn at x the line has no height there.
function heightAt(line: readonly ChartPoint[], x: number): number | null {
  for (let i = 0; i < line.length; i++) {
    const a = line[i]!
    if (Math.abs(a.x - x) < 1e-12) return a.y
    const b = line[i + 1]
    if (b && x > a.x && x < b.x) return a.y + ((x - a.x) / (b.x - a.x)) * (b.y - a.y)
  }
  return null
}

// Every place where one of the two drawn lines turns: the gap between two broken lines is widest at such a place.
function drawnGaps(mask: readonly MaskPoint[], trace: readonly TracePoint[]) {
  const m = maskChartPoints(mask)
  const t = traceChartPoints(trace)
  const xs = [...m, ...t].map((p) => p.x)
  return xs.flatMap((x) => {
    const limit = heightAt(m, x)
    const level = heightAt(t, x)
    return limit === null || level === null ? [] : [{ x, limit, level }]
  })
}

// Masks shaped like the demo parts' specifications (dBc/Hz at each offset): a steep close-in slope, a flatter floor.
const MASKS: MaskPoint[][] = [
  [{ offsetHz: 100, usl: -114 }, { offsetHz: 1e3, usl: -134 }, { offsetHz: 1e4, usl: -144 }, { offsetHz: 1e5, usl: -150 }],
  [{ offsetHz: 1e3, usl: -96 }, { offsetHz: 1e4, usl: -112 }, { offsetHz: 1e5, usl: -121 }, { offsetHz: 1e6, usl: -140 }, { offsetHz: 1e7, usl: -145 }],
  [{ offsetHz: 10, usl: -70 }, { offsetHz: 3e3, usl: -120 }, { offsetHz: 2e4, usl: -131 }],
]

function limitLine(mask: readonly MaskPoint[], f: number): number {
  // the sample traces are built below the mask read as straight lines in log10 f between its spots (common practice)
  const s = [...mask].sort((a, b) => a.offsetHz - b.offsetHz)
  const lf = Math.log10(Math.min(Math.max(f, s[0]!.offsetHz), s[s.length - 1]!.offsetHz))
  for (let i = 0; i < s.length - 1; i++) {
    const a = s[i]!, b = s[i + 1]!
    if (lf <= Math.log10(b.offsetHz)) return a.usl + ((lf - Math.log10(a.offsetHz)) / (Math.log10(b.offsetHz) - Math.log10(a.offsetHz))) * (b.usl - a.usl)
  }
  return s[s.length - 1]!.usl
}

function sampleTraces(): { mask: MaskPoint[]; trace: TracePoint[] }[] {
  const rand = mulberry32(20261202)
  const n = gaussian(rand)
  const out: { mask: MaskPoint[]; trace: TracePoint[] }[] = []
  for (const mask of MASKS) {
    const lo = mask[0]!.offsetHz / 3
    const hi = mask[mask.length - 1]!.offsetHz * 3
    for (let k = 0; k < 40; k++) {
      // sweeps of 3 to 60 points, some coarse enough to straddle the mask's corners, all starting and ending beyond it
      const points = 3 + Math.floor(rand() * 58)
      const headroom = k % 4 === 0 ? 0.05 : 0.5 + 3 * rand()
      const trace: TracePoint[] = []
      for (let i = 0; i < points; i++) {
        const f = lo * (hi / lo) ** (i / (points - 1))
        trace.push([f, limitLine(mask, f) - headroom - Math.abs(0.3 * n())])
      }
      out.push({ mask, trace })
    }
    // a coarse sweep whose straight segments bridge every corner of the mask: the corners must stay above it
    out.push({ mask, trace: [[lo, limitLine(mask, lo) - 20], [hi, limitLine(mask, hi) - 1]] })
  }
  return out
}

describe('phase-noise drawing against the judgement', () => {
  const samples = sampleTraces()
  const passing = samples.filter(({ mask, trace }) => (traceMaskMargin(mask, trace)?.worstMarginDb ?? -Infinity) >= 0)

  it('has sample sweeps the judge finds under the mask everywhere, and coarse ones it finds crossing a corner', () => {
    expect(passing.length).toBeGreaterThan(60)
    // built below the mask at each of their own points, yet the straight segment between two points crosses a corner
    expect(samples.length - passing.length).toBeGreaterThan(0)
  })

  it('draws every point of a sweep the judge finds under the mask on or below the drawn mask at the same x', () => {
    for (const { mask, trace } of passing) {
      const gaps = drawnGaps(mask, trace)
      expect(gaps.length).toBeGreaterThan(0)
      for (const g of gaps) expect(g.level, `at 10^${g.x.toFixed(3)} Hz`).toBeLessThanOrEqual(g.limit + 1e-9)
    }
  })

  it('draws a sweep the judge finds above the mask above the drawn mask where the judge says', () => {
    const over = samples.map(({ mask, trace }) => ({ mask, trace: trace.map(([f, l]) => [f, l + 4] as TracePoint) }))
      .filter(({ mask, trace }) => traceMaskMargin(mask, trace)!.worstMarginDb < 0)
    expect(over.length).toBeGreaterThan(50)
    for (const { mask, trace } of over) {
      const judged = traceMaskMargin(mask, trace)!
      const g = drawnGaps(mask, trace).find((p) => Math.abs(p.x - Math.log10(judged.worstOffsetHz)) < 1e-9)!
      expect(g.limit - g.level).toBeCloseTo(judged.worstMarginDb, 9)
    }
  })

  it('draws the mask through the specification\'s spot limits and nowhere beyond them', () => {
    const drawn = maskChartPoints(MASKS[1]!)
    expect(drawn.map((p) => [10 ** p.x, p.y].map((v) => Number(v.toPrecision(9))))).toEqual(MASKS[1]!.map((p) => [p.offsetHz, p.usl]))
    expect(heightAt(drawn, Math.log10(500))).toBeNull()
    expect(heightAt(drawn, Math.log10(2e7))).toBeNull()
  })
})
