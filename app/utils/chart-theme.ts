// Shared look of Tercet's charts: light grid, ink data, copper highlight, dashed limits labelled in words.

export const INK = '#1d2b45'
export const INK_SOFT = '#3d4b66'
export const INK_FAINT = '#6b7690'
export const RULE = '#c9cfdb'
export const COPPER = '#b8662a'
export const COPPER_LIGHT = '#e9b98f'
export const FAIL = '#a3262a'
export const PASS = '#2f6b3a'
export const MARGINAL = '#8a5a00'

export function baseChart(height: number, extra: Record<string, unknown> = {}) {
  return {
    height,
    animations: { enabled: false },
    toolbar: { show: false },
    zoom: { enabled: false },
    fontFamily: 'Inter, system-ui, sans-serif',
    foreColor: INK_SOFT,
    background: 'transparent',
    ...extra,
  }
}

export const GRID = { borderColor: RULE, strokeDashArray: 0, xaxis: { lines: { show: true } }, yaxis: { lines: { show: true } }, padding: { left: 8, right: 16 } }

export const MONO_LABEL = { fontFamily: '"Roboto Mono", ui-monospace, monospace', fontSize: '11px' }

type LineSpec = { value: number | null | undefined; label: string; color?: string; dash?: number; left?: boolean }

function labelStyle(color: string) {
  return { borderColor: color, style: { color: '#fff', background: color, fontFamily: MONO_LABEL.fontFamily, fontSize: '10px', padding: { left: 3, right: 3, top: 1, bottom: 1 } } }
}

/** Horizontal dashed lines (limits on a value axis). */
export function yLines(lines: LineSpec[]) {
  return lines.filter((l) => typeof l.value === 'number' && Number.isFinite(l.value)).map((l) => ({
    y: l.value, borderColor: l.color ?? FAIL, strokeDashArray: l.dash ?? 6, borderWidth: 1.5,
    label: { text: l.label, position: l.left ? 'left' : 'right', textAnchor: l.left ? 'start' : 'end', offsetX: l.left ? 2 : -2, ...labelStyle(l.color ?? FAIL) },
  }))
}

/** Vertical dashed lines (limits on a numeric x axis). */
export function xLines(lines: LineSpec[]) {
  return lines.filter((l) => typeof l.value === 'number' && Number.isFinite(l.value)).map((l) => ({
    x: l.value, borderColor: l.color ?? FAIL, strokeDashArray: l.dash ?? 6, borderWidth: 1.5,
    label: { text: l.label, orientation: 'horizontal', position: 'top', offsetY: -4, ...labelStyle(l.color ?? FAIL) },
  }))
}

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
