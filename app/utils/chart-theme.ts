// Tercet's one chart look, used by every chart: colours, type and grid from the palette in tailwind.config.ts, the
// charting library's own legend replaced by ChartLegend (glyphs drawn like the marks), limit lines named in plain
// text beside the plot rather than in tag boxes, and air at both ends of an index axis so no end point is cut.
import type { ApexOptions } from 'apexcharts'
import tailwind from '../../tailwind.config'

type Shades = Record<string, string>
const palette = (tailwind.theme?.extend?.colors ?? {}) as Record<string, Shades>
const shade = (name: string, key = 'DEFAULT') => palette[name]?.[key] ?? '#000'

export const INK = shade('ink')
export const INK_SOFT = shade('ink', 'soft')
export const INK_FAINT = shade('ink', 'faint')
export const RULE = shade('ink', 'rule')
export const PAPER = shade('paper')
export const PAPER_DEEP = shade('paper', 'deep')
export const COPPER = shade('copper')
export const COPPER_LIGHT = shade('copper', 'light')
export const COPPER_DARK = shade('copper', 'dark')
export const FAIL = shade('verdict', 'fail')
export const PASS = shade('verdict', 'pass')
export const MARGINAL = shade('verdict', 'marginal')
const NIGHT_TEXT = shade('night', 'text')
const NIGHT_RULE = shade('night', 'rule')

const fonts = (tailwind.theme?.extend?.fontFamily ?? {}) as Record<string, string[]>
export const SANS = (fonts.sans ?? ['sans-serif']).join(', ')
export const MONO = (fonts.mono ?? ['monospace']).join(', ')

/** Light pages, or the night layout of the floor's wall monitors. */
export type ChartMode = 'day' | 'night'
export const modeColours = (mode: ChartMode = 'day') =>
  mode === 'night' ? { text: NIGHT_TEXT, faint: RULE, grid: NIGHT_RULE, trace: NIGHT_TEXT } : { text: INK_SOFT, faint: INK_FAINT, grid: RULE, trace: INK }

export const MONO_LABEL = { fontFamily: MONO, fontSize: '11px' }
/** Rule-hit glyphs of the individuals chart, one shape and colour per rule. */
export type MarkerShape = 'circle' | 'square' | 'triangle' | 'diamond'

// ---- series looks: one definition gives the library's stroke/marker/fill arrays and the legend's glyphs ----

export type Look =
  | { kind: 'trace'; color: string; width?: number; dash?: number; marker?: number }
  | { kind: 'limit'; color: string; width?: number; dash?: number }
  | { kind: 'points'; color: string; shape?: MarkerShape; size?: number }
  | { kind: 'area'; color: string; opacity?: number }
  | { kind: 'bars'; color: string }
  | { kind: 'box'; color: string; fill: string }

/** A series as drawn; `legend: false` keeps it out of the legend (e.g. an empty series). */
export type Drawn = { name: string; look: Look; legend?: boolean; title?: string }

export type Glyph =
  | { kind: 'line'; color: string; width: number; dash: number }
  | { kind: 'marker'; color: string; shape: MarkerShape }
  | { kind: 'area'; color: string; opacity: number }
  | { kind: 'bar'; color: string }
  | { kind: 'box'; color: string; fill: string }
export type LegendEntry = { label: string; glyph: Glyph; title?: string }

const DEFAULT_DASH = 5

export function glyphOf(look: Look): Glyph {
  switch (look.kind) {
    case 'trace': return { kind: 'line', color: look.color, width: look.width ?? 1.75, dash: look.dash ?? 0 }
    case 'limit': return { kind: 'line', color: look.color, width: look.width ?? 1.5, dash: look.dash ?? DEFAULT_DASH }
    case 'points': return { kind: 'marker', color: look.color, shape: look.shape ?? 'circle' }
    case 'area': return { kind: 'area', color: look.color, opacity: look.opacity ?? 0.5 }
    case 'bars': return { kind: 'bar', color: look.color }
    case 'box': return { kind: 'box', color: look.color, fill: look.fill }
  }
}

/** Colours, strokes, markers and fills for the series, in their order. */
export function seriesStyle(drawn: Drawn[]): Pick<ApexOptions, 'colors' | 'stroke' | 'markers' | 'fill'> {
  const width = drawn.map(({ look: l }) => (l.kind === 'trace' ? l.width ?? 1.75 : l.kind === 'limit' ? l.width ?? 1.5 : l.kind === 'box' ? 1 : 0))
  const dash = drawn.map(({ look: l }) => (l.kind === 'limit' ? l.dash ?? DEFAULT_DASH : l.kind === 'trace' ? l.dash ?? 0 : 0))
  const size = drawn.map(({ look: l }) => (l.kind === 'points' ? l.size ?? 5 : l.kind === 'trace' ? l.marker ?? 0 : 0))
  const shape = drawn.map(({ look: l }) => (l.kind === 'points' ? l.shape ?? 'circle' : 'circle'))
  const opacity = drawn.map(({ look: l }) => (l.kind === 'area' ? l.opacity ?? 0.5 : 1))
  return {
    colors: drawn.map((d) => d.look.color),
    stroke: { width, dashArray: dash, curve: 'straight', lineCap: 'butt' },
    markers: { size, shape, strokeWidth: 0, hover: { sizeOffset: 2 } },
    fill: { type: 'solid', opacity },
  }
}

export function legendOf(drawn: Drawn[]): LegendEntry[] {
  return drawn.filter((d) => d.legend !== false).map((d) => ({ label: d.name, glyph: glyphOf(d.look), title: d.title }))
}

// ---- limit lines: drawn as annotations without tag boxes, named in text outside the plot ----

export type LimitLine = { value: number | null | undefined; label: string; color?: string; dash?: number; width?: number; legend?: string }

const LABEL_FONT = { fontFamily: MONO, fontSize: '10px', fontWeight: 500 }
const NO_BOX = { borderWidth: 0, borderColor: 'transparent', style: { background: 'transparent', padding: { left: 0, right: 0, top: 0, bottom: 0 } } }
const CHAR_PX = 6.2 // Roboto Mono at 10 px
const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v)

/** Room the edge labels of these lines need beside the plot. */
export function labelRoom(lines: LimitLine[]): number {
  const drawn = lines.filter((l) => isNum(l.value) && l.label)
  return drawn.length ? Math.ceil(Math.max(...drawn.map((l) => l.label.length)) * CHAR_PX) + 12 : 0
}

/**
 * Horizontal limit lines, each named at the plot's right edge outside the data. With the axis span and an estimate
 * of the plot's height, labels closer than a line of text are pushed apart so two near limits stay readable.
 */
export function yLimits(lines: LimitLine[], fit?: { min: number; max: number; plotHeight: number }) {
  const drawn = lines.filter((l) => isNum(l.value))
  const shift = new Map<LimitLine, number>()
  if (fit && fit.max > fit.min) {
    const px = (v: number) => ((fit.max - v) / (fit.max - fit.min)) * fit.plotHeight
    const placed = drawn.filter((l) => l.label).map((l) => ({ l, at: px(l.value!) })).sort((a, b) => a.at - b.at)
    let last = -Infinity
    for (const p of placed) {
      const at = Math.max(p.at, last + 12)
      shift.set(p.l, at - p.at)
      last = at
    }
  }
  return drawn.map((l) => ({
    y: l.value!, borderColor: l.color ?? FAIL, strokeDashArray: l.dash ?? DEFAULT_DASH, borderWidth: l.width ?? 1.25,
    label: l.label
      ? { text: l.label, position: 'right', textAnchor: 'start', offsetX: 6, offsetY: 6 + (shift.get(l) ?? 0), ...NO_BOX, style: { ...NO_BOX.style, ...LABEL_FONT, color: l.color ?? FAIL } }
      : { text: '' },
  }))
}

/** Vertical limit lines (a numeric x axis), each named above the plot. */
export function xLimits(lines: LimitLine[]) {
  return lines.filter((l) => isNum(l.value)).map((l) => ({
    x: l.value!, borderColor: l.color ?? FAIL, strokeDashArray: l.dash ?? DEFAULT_DASH, borderWidth: l.width ?? 1.25,
    label: l.label
      ? { text: l.label, orientation: 'horizontal', position: 'top', textAnchor: 'middle', offsetY: -14, ...NO_BOX, style: { ...NO_BOX.style, ...LABEL_FONT, color: l.color ?? FAIL } }
      : { text: '' },
  }))
}

/** Legend entries for limit lines: lines sharing a `legend` text (e.g. "specification limits") share one entry. */
export function limitLegend(lines: LimitLine[]): LegendEntry[] {
  const out = new Map<string, LegendEntry>()
  for (const l of lines.filter((x) => isNum(x.value))) {
    const label = l.legend ?? l.label
    if (!out.has(label)) out.set(label, { label, glyph: { kind: 'line', color: l.color ?? FAIL, width: l.width ?? 1.5, dash: l.dash ?? DEFAULT_DASH } })
  }
  return [...out.values()]
}

/**
 * After each render: limit names get no box (the library draws one behind every annotation label, here see-through,
 * so it is removed), and on box-plot charts, where the library draws horizontal annotations only between the first
 * and last category centres while the grid runs wider, the limit lines are stretched to the grid's own ends and
 * their names set just past the right end, as on every other chart.
 */
function finishLimits(chart: unknown) {
  const root = (chart as { el?: Element } | undefined)?.el // the instance's container, not in the library's typings
  if (!root) return
  root.querySelectorAll('.apexcharts-yaxis-annotations rect:not(.apexcharts-annotation-rect), .apexcharts-xaxis-annotations rect:not(.apexcharts-annotation-rect)').forEach((r) => r.remove())
  const grid = root.querySelector('.apexcharts-gridlines-horizontal line')
  const x1 = grid?.getAttribute('x1')
  const x2 = grid?.getAttribute('x2')
  if (!x1 || !x2) return
  root.querySelectorAll('.apexcharts-yaxis-annotations line').forEach((l) => { l.setAttribute('x1', x1); l.setAttribute('x2', x2) })
  root.querySelectorAll('.apexcharts-yaxis-annotations text').forEach((t) => t.setAttribute('x', String(Number(x2) + 6)))
}

// ---- the options every chart starts from ----

export function baseChart(height: number, extra: Record<string, unknown> = {}, mode: ChartMode = 'day') {
  return {
    height,
    animations: { enabled: false },
    toolbar: { show: false },
    zoom: { enabled: false },
    selection: { enabled: false },
    fontFamily: SANS,
    foreColor: modeColours(mode).text,
    background: 'transparent',
    parentHeightOffset: 0,
    redrawOnParentResize: true,
    // the library's sheet comes as a file (nuxt.config.ts css); its inline <style> would need the page's CSP nonce
    injectStyleSheet: false,
    ...extra,
  }
}

export function gridOf(pad: { left?: number; right?: number; top?: number; bottom?: number } = {}, mode: ChartMode = 'day') {
  return {
    borderColor: modeColours(mode).grid, strokeDashArray: 0,
    xaxis: { lines: { show: true } }, yaxis: { lines: { show: true } },
    padding: { left: 8, right: 12, top: 0, bottom: 0, ...pad },
  }
}
export const GRID = gridOf()

/** An axis title in the house style: small, unbolded, faint. */
export function axisTitle(text: string, mode: ChartMode = 'day') {
  return { text, style: { fontFamily: SANS, fontSize: '11px', fontWeight: 500, color: modeColours(mode).faint } }
}

type Axis = Record<string, any>
function styleAxis(a: Axis | undefined, mode: ChartMode): Axis | undefined {
  if (!a) return a
  const c = modeColours(mode)
  return {
    ...a,
    labels: { ...a.labels, style: { fontFamily: MONO, fontSize: '11px', colors: c.faint, ...a.labels?.style } },
    title: a.title?.text ? { ...a.title, style: { ...axisTitle('', mode).style, ...a.title.style } } : a.title,
    axisBorder: { show: true, color: c.grid, ...a.axisBorder },
    axisTicks: { show: true, color: c.grid, ...a.axisTicks },
  }
}

/**
 * Tercet's look over a chart's own options: the library legend off (ChartLegend replaces it), no data labels,
 * axes in mono figures with small faint titles, grid and tooltip in the palette.
 */
export function themed(o: ApexOptions, mode: ChartMode = 'day'): ApexOptions {
  return {
    ...o,
    chart: { ...baseChart(Number(o.chart?.height ?? 260), {}, mode), ...o.chart, events: { mounted: finishLimits, updated: finishLimits, ...o.chart?.events } },
    legend: { show: false },
    dataLabels: { enabled: false },
    grid: { ...gridOf({}, mode), ...o.grid },
    states: { hover: { filter: { type: 'none' } }, active: { filter: { type: 'none' } } },
    xaxis: styleAxis(o.xaxis as Axis, mode),
    yaxis: Array.isArray(o.yaxis) ? o.yaxis.map((a) => styleAxis(a, mode)!) : styleAxis(o.yaxis as Axis, mode),
    tooltip: { theme: mode === 'night' ? 'dark' : 'light', style: { fontFamily: SANS, fontSize: '12px' }, marker: { show: false }, ...o.tooltip },
  }
}

// ---- axis spans ----

/** Axis range that keeps every value and every limit in view, with a little air. */
export function spanWith(values: (number | null | undefined)[], pad = 0.06): { min: number; max: number } | undefined {
  const v = values.filter((x): x is number => typeof x === 'number' && Number.isFinite(x))
  if (!v.length) return undefined
  let lo = Math.min(...v)
  let hi = Math.max(...v)
  if (hi === lo) { const d = Math.abs(lo) * 0.01 || 1; lo -= d; hi += d }
  const air = (hi - lo) * pad
  return { min: lo - air, max: hi + air }
}

function niceStep(raw: number): number {
  const p = 10 ** Math.floor(Math.log10(raw))
  const f = raw / p
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 2.5 ? 2.5 : f <= 5 ? 5 : 10) * p
}

/** spanWith rounded out to round tick steps, with the tick count that lands on them. */
export function niceSpan(values: (number | null | undefined)[], ticks = 6, pad = 0.04): { min: number; max: number; tickAmount: number } | undefined {
  const s = spanWith(values, pad)
  if (!s) return undefined
  const step = niceStep((s.max - s.min) / ticks)
  const min = Math.floor(s.min / step) * step
  const max = Math.ceil(s.max / step) * step
  return { min, max, tickAmount: Math.max(1, Math.round((max - min) / step)) }
}

/**
 * An axis of units in test order `first`…`last` (1-based) on round ticks, from a tick before the first to a tick past
 * the last, so the end points sit inside the plot with air around their markers. A whole lot starts at 0; the last
 * units of a large lot get an axis of their own stretch, not one from 0 with them crowded at its far end.
 */
export function indexSpan(last: number, first = 1, ticks = 10): { min: number; max: number; tickAmount: number } {
  const whole = (raw: number) => Math.max(1, Math.floor(niceStep(raw))) // units are counted: no tick at 2.5
  const coarse = whole(Math.max(last - first + 1, 1) / ticks)
  const fine = whole(coarse / 2.5)
  const start = (step: number) => Math.floor((first - 0.5) / step) * step
  const end = (step: number) => Math.ceil((last + 0.5) / step) * step
  const width = (step: number) => end(step) - start(step)
  // the finer step when the coarse one would leave much of the plot empty past the last point (72 → 75, not 80)
  const step = width(fine) < width(coarse) && width(fine) / fine <= 16 ? fine : coarse
  return { min: start(step), max: end(step), tickAmount: Math.round(width(step) / step) }
}

/** indexSpan of chart points carrying their 0-based position in the lot's test order. */
export function indexSpanOf(points: { index: number }[]): { min: number; max: number; tickAmount: number } {
  return points.length ? indexSpan(points[points.length - 1]!.index + 1, points[0]!.index + 1) : indexSpan(1)
}
