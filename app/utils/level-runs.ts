// A line series for a chart with the inner points of each level run left out: a line through equal values draws the
// same segment whether or not those points are there, and a chart lays out every point it is given (the EWMA
// limits settle after some tens of points and then repeat the same value for the rest of the lot).
export type XY = { x: number; y: number }

/** The series with only the first and last point of each run of equal y. */
export function levelRunEnds(points: XY[]): XY[] {
  return points.filter((p, i) => i === 0 || i === points.length - 1 || p.y !== points[i - 1]!.y || p.y !== points[i + 1]!.y)
}
