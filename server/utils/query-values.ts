// Small readers of query-string values shared by the list routes' parsers (the services take parsed values).
import { problem } from './problem'

/** The first value of a query parameter as text; undefined when absent or empty. */
export function firstValue(v: unknown): string | undefined {
  const s = Array.isArray(v) ? v[0] : v
  return s == null || s === '' ? undefined : String(s)
}

/** A page number or size: absent gives the default; anything but 1…max is a 400 pointing at /query/<name>. */
export function wholeNumberParam(raw: Record<string, unknown>, name: string, dflt: number, max: number): number {
  const s = firstValue(raw[name])
  if (s === undefined) return dflt
  if (!/^\d{1,6}$/.test(s) || Number(s) < 1 || Number(s) > max) throw problem(400, 'Some query parameters are not valid.', { errors: [{ pointer: `/query/${name}`, message: `must be a whole number from 1 to ${max}` }] })
  return Number(s)
}
