// A long line series thinned to what a plot of some hundred pixel columns can show: the series' x span is cut into
// equal columns and each keeps its lowest and highest point, in x order, with the series' first and last point. The
// line through them reaches every column's extremes, so its outline on screen is the whole series' outline, while the
// chart lays out a few hundred points instead of thousands (its cost grows with every point it is given).

/** The column (0 … columns − 1) of the span [min, min + width · columns] that x falls in; all in 0 when the span is empty. */
function columnOf(x: number, min: number, width: number, columns: number): number {
  return width > 0 ? Math.min(columns - 1, Math.max(0, Math.floor((x - min) / width))) : 0
}

/** Columns a thinned line keeps two points of: about one per two pixels of a half-page plot. */
export const PLOT_COLUMNS = 300

/** The items to draw of `items` (in increasing x), at most 2 · columns + 2 of them; all of them when that is no fewer. */
export function columnExtremes<T>(items: readonly T[], x: (t: T) => number, y: (t: T) => number, columns = PLOT_COLUMNS): T[] {
  if (items.length <= 2 * columns + 2) return [...items]
  const x0 = x(items[0]!)
  const width = (x(items[items.length - 1]!) - x0) / columns
  const kept: number[] = [0]
  let col = -1
  let lo = -1
  let hi = -1
  const close = () => {
    if (col < 0) return
    for (const i of lo === hi ? [lo] : [Math.min(lo, hi), Math.max(lo, hi)]) if (i !== kept[kept.length - 1]) kept.push(i)
  }
  for (let i = 0; i < items.length; i++) {
    const c = columnOf(x(items[i]!), x0, width, columns)
    if (c !== col) { close(); col = c; lo = i; hi = i; continue }
    const v = y(items[i]!)
    if (v < y(items[lo]!)) lo = i
    if (v > y(items[hi]!)) hi = i
  }
  close()
  if (kept[kept.length - 1] !== items.length - 1) kept.push(items.length - 1)
  return kept.map((i) => items[i]!)
}

/** Columns of marks a plot has room for without two marks of one kind overlapping (a mark is some 6 px wide). */
export const MARK_COLUMNS = 120

/**
 * Marks to draw of `items` (in increasing x): per column of the x span, the one farthest out by `distance`; all of
 * them when they are no more than the columns. Marks of one kind closer than their own width read as one mark.
 */
export function columnPeaks<T>(items: readonly T[], x: (t: T) => number, distance: (t: T) => number, span: { min: number; max: number }, columns = MARK_COLUMNS): T[] {
  if (items.length <= columns) return [...items]
  const width = (span.max - span.min) / columns
  const best = new Map<number, T>()
  for (const t of items) {
    const c = columnOf(x(t), span.min, width, columns)
    const held = best.get(c)
    if (held === undefined || distance(t) > distance(held)) best.set(c, t)
  }
  return [...best.entries()].sort((a, b) => a[0] - b[0]).map(([, t]) => t)
}
