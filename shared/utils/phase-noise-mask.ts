// The phase-noise limit between the spot offsets a specification names, defined once for the judgement and every
// chart that draws it. Common practice for phase-noise masks: the limit runs in straight lines between the spot
// limits on a log-frequency axis (L_mask linear in log10 f, i.e. a constant slope in dB per decade). Beyond the
// outermost spots the specification says nothing, so there is no limit there: the mask is not extended, and trace
// points outside its span are not judged.
import type { MaskPoint } from './phase-noise-plot'
import type { DecisionRule } from './decision'

/** The spot limits sorted by offset; offsets must be finite and > 0, limits finite, no offset twice. */
export function sortedMask(mask: readonly MaskPoint[]): MaskPoint[] {
  for (const p of mask) {
    if (!Number.isFinite(p.offsetHz) || p.offsetHz <= 0) throw new RangeError(`mask offset must be a finite number > 0, got ${p.offsetHz}`)
    if (!Number.isFinite(p.usl)) throw new RangeError(`mask limit at ${p.offsetHz} Hz must be finite, got ${p.usl}`)
  }
  const sorted = [...mask].sort((a, b) => a.offsetHz - b.offsetHz)
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i]!.offsetHz === sorted[i - 1]!.offsetHz) throw new RangeError(`the mask names ${sorted[i]!.offsetHz} Hz twice`)
  }
  return sorted
}

function limitOnSorted(sorted: readonly MaskPoint[], offsetHz: number): number | null {
  if (!Number.isFinite(offsetHz) || offsetHz <= 0 || !sorted.length) return null
  if (offsetHz < sorted[0]!.offsetHz || offsetHz > sorted[sorted.length - 1]!.offsetHz) return null
  for (let i = 0; i < sorted.length; i++) {
    const a = sorted[i]!
    if (a.offsetHz === offsetHz) return a.usl
    const b = sorted[i + 1]
    if (b && offsetHz < b.offsetHz) {
      const t = Math.log10(offsetHz / a.offsetHz) / Math.log10(b.offsetHz / a.offsetHz)
      return a.usl + t * (b.usl - a.usl)
    }
  }
  return null
}

/** The upper limit at any offset: straight lines between spot limits on a log-frequency axis; null beyond the outermost spots. */
export function maskLimitAt(mask: readonly MaskPoint[], offsetHz: number): number | null {
  return limitOnSorted(sortedMask(mask), offsetHz)
}

/**
 * The mask as a chart draws it: its spot limits in offset order. On an axis of log10(offset) the straight segments
 * between them are exactly maskLimitAt; the line starts and ends at the outermost spots, where the limit ends.
 */
export function maskLine(mask: readonly MaskPoint[]): [number, number][] {
  return sortedMask(mask).map((p) => [p.offsetHz, p.usl])
}

export type TracePoint = readonly [offsetHz: number, dBcHz: number]

/** A point of a phase-noise chart: x is log10 of the offset, and charts join points with straight segments on it. */
export type ChartPoint = { x: number; y: number }
export const chartPoint = (offsetHz: number, level: number): ChartPoint => ({ x: Math.log10(offsetHz), y: level })

/** The mask as every chart draws it (unit, lot, specification, portal): maskLine's corners on the log10 axis. */
export function maskChartPoints(mask: readonly MaskPoint[]): ChartPoint[] {
  return maskLine(mask).map(([f, u]) => chartPoint(f, u))
}

/** A sweep as every chart draws it: each point, in offset order, on the same axis (the judge reads it the same way). */
export function traceChartPoints(trace: readonly TracePoint[]): ChartPoint[] {
  return trace.filter(([f, l]) => Number.isFinite(f) && f > 0 && Number.isFinite(l)).map(([f, l]) => chartPoint(f, l)).sort((a, b) => a.x - b.x)
}

export interface MaskMargin {
  /** Limit minus trace at the worst place, dB: negative where the trace lies above the mask. */
  worstMarginDb: number
  worstOffsetHz: number
  /** The part of the sweep that lies under the mask and was judged. */
  judgedFromHz: number
  judgedToHz: number
  /** Places compared: every trace point under the mask and every spot offset inside the sweep. */
  points: number
}

/**
 * The worst margin of a phase-noise sweep under the mask. The trace is read as straight lines between its points on
 * the same log-frequency axis (as the jitter integration reads it); the difference of two such broken lines is worst
 * at a corner of one of them, so comparing at every trace point and at every spot offset inside the sweep finds the
 * worst margin over the whole judged span exactly. Ties go to the lowest offset. Null when sweep and mask do not overlap.
 */
export function traceMaskMargin(mask: readonly MaskPoint[], trace: readonly TracePoint[]): MaskMargin | null {
  const m = sortedMask(mask)
  const pts = trace.filter(([f, l]) => Number.isFinite(f) && f > 0 && Number.isFinite(l)).map(([f, l]) => [f, l] as const).sort((a, b) => a[0] - b[0])
  if (!m.length || !pts.length) return null
  const from = Math.max(m[0]!.offsetHz, pts[0]![0])
  const to = Math.min(m[m.length - 1]!.offsetHz, pts[pts.length - 1]![0])
  if (from > to) return null

  let worst: { margin: number; f: number } | null = null
  let count = 0
  const consider = (f: number, level: number) => {
    const limit = limitOnSorted(m, f)
    if (limit === null) return
    count++
    const margin = limit - level
    if (!worst || margin < worst.margin || (margin === worst.margin && f < worst.f)) worst = { margin, f }
  }
  for (const [f, l] of pts) if (f >= from && f <= to) consider(f, l)
  for (const p of m) {
    if (p.offsetHz < from || p.offsetHz > to || pts.some(([f]) => f === p.offsetHz)) continue
    const i = pts.findIndex(([f]) => f > p.offsetHz)
    const [fa, la] = pts[i - 1]!
    const [fb, lb] = pts[i]!
    consider(p.offsetHz, la + (Math.log10(p.offsetHz / fa) / Math.log10(fb / fa)) * (lb - la))
  }
  const w = worst as { margin: number; f: number } | null
  return w ? { worstMarginDb: w.margin, worstOffsetHz: w.f, judgedFromHz: from, judgedToHz: to, points: count } : null
}

/**
 * How the margin is judged: against 0 dB with the phase-noise limits' decision rule and guard band. The mask is one
 * limit line, so it takes the widest default uncertainty among its spot limits, and is guarded if any spot limit is.
 */
export function maskDecision(limits: readonly { rule: DecisionRule; defaultUncertainty: number | null }[]): { rule: DecisionRule; defaultUncertainty: number | null } {
  let w: number | null = null
  for (const l of limits) if (l.defaultUncertainty != null) w = Math.max(w ?? 0, l.defaultUncertainty)
  return { rule: limits.some((l) => l.rule === 'guarded') ? 'guarded' : 'simple', defaultUncertainty: w }
}

export const MASK_MARGIN = 'phase_noise_mask_margin'

type LimitRow = {
  step: string; name: string; qualifier: number; lsl: number | null; usl: number | null; target: number | null; unit: string
  required: boolean; rule: DecisionRule; defaultUncertainty: number | null; key: boolean
}

/**
 * The limit the mask margin of a step is held to, derived from that step's phase-noise limits (the specification
 * names no limit of its own for it). A sweep has thousands of points, each as uncertain as a spot reading, so it
 * fails only where it lies beyond the mask by more than the mask's guard band (guarded rejection, in the terms of
 * ILAC-G8:09/2019): the margin's lower limit is minus that band, judged simply. Undefined when the step has no
 * phase-noise upper limit.
 */
export function maskMarginLimit<L extends LimitRow>(limits: readonly L[], step: string): LimitRow | undefined {
  const spots = limits.filter((l) => l.step === step && l.name === 'phase_noise' && l.usl != null)
  if (!spots.length) return undefined
  const band = maskDecision(spots).defaultUncertainty ?? 0
  return {
    step, name: MASK_MARGIN, qualifier: 0, lsl: band > 0 ? -band : 0, usl: null, target: null, unit: 'dB', required: false,
    rule: 'simple', defaultUncertainty: null, key: spots.some((l) => l.key),
  }
}

/** The limit in force for one parameter: the specification's own, or for the mask margin the one derived above. */
export function limitInForce<L extends LimitRow>(limits: readonly L[], p: { step: string; name: string; qualifier: number }): LimitRow | undefined {
  return limits.find((l) => l.step === p.step && l.name === p.name && l.qualifier === p.qualifier)
    ?? (p.name === MASK_MARGIN && p.qualifier === 0 ? maskMarginLimit(limits, p.step) : undefined)
}
