// SQL literals for the statements that write many values at once (measurements, statistics rows): building the text
// once costs less than binding hundreds of placeholders and formatting them afterwards.
import mysql from 'mysql2'

/** A DATETIME(3) literal in UTC, as the connection's time zone reads it. */
export function utcLiteral(d: Date): string {
  return `'${d.toISOString().slice(0, 23).replace('T', ' ')}'`
}

/** A number as an SQL literal; judged values are finite by the time they are stored. */
export function numberLiteral(x: number | null | undefined): string {
  if (x === null || x === undefined) return 'NULL'
  if (!Number.isFinite(x)) throw new RangeError(`a stored value must be finite, got ${x}`)
  return String(x)
}

// names, units and the like repeat on every run: each distinct one is escaped once
const escapedText = new Map<string, string>()
export function textLiteral(s: string | null | undefined): string {
  if (s === null || s === undefined) return 'NULL'
  let hit = escapedText.get(s)
  if (hit === undefined) {
    hit = mysql.escape(s)
    if (escapedText.size < 10_000) escapedText.set(s, hit)
  }
  return hit
}

