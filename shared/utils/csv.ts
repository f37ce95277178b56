export type CsvValue = string | number | boolean | null | undefined

// A spreadsheet evaluates a text cell starting with one of these as a formula (OWASP, "CSV Injection").
const FORMULA_START = /^[=+\-@\t\r]/

/**
 * One CSV cell. Numbers are written as numbers: shortest round-trip form (every digit of the double), ASCII minus,
 * never escaped, so a spreadsheet reads −136.9 as a number it can chart; a number cannot start a formula. Text that
 * looks like a formula gets a leading apostrophe, and text already starting with an apostrophe gets a second one so
 * that csvUnescapeCell restores every value exactly. Non-finite numbers are written empty.
 */
export function csvEscapeCell(value: CsvValue): string {
  if (value == null) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : ''
  let s = String(value)
  if (FORMULA_START.test(s) || s.startsWith("'")) s = `'${s}`
  return /[",\r\n]/.test(s) || s !== s.trim() ? `"${s.replace(/"/g, '""')}"` : s
}

/** A column header carrying its unit, e.g. "p10 [dBc/Hz]"; without a unit the name alone. */
export function csvHeaderWithUnit(name: string, unit: string | null | undefined): string {
  return unit ? `${name} [${unit}]` : name
}

/** Reverses csvEscapeCell on a parsed cell; a lone apostrophe in hand-written text is left alone. */
export function csvUnescapeCell(cell: string): string {
  return cell.length > 1 && cell[0] === "'" && (FORMULA_START.test(cell.slice(1)) || cell[1] === "'") ? cell.slice(1) : cell
}

export function csvLine(cells: CsvValue[]): string {
  return cells.map(csvEscapeCell).join(',')
}

export function toCsvDocument(header: string[], rows: CsvValue[][]): string {
  return [csvLine(header), ...rows.map(csvLine)].join('\r\n') + '\r\n'
}

export class CsvSyntaxError extends Error {
  constructor(message: string, public record: number) { super(message) }
}

/**
 * RFC 4180 records: quoted cells may hold commas, quotes ("") and line breaks; CRLF or LF ends a record.
 * A leading byte-order mark and blank lines are ignored. Cells come back raw (not un-escaped).
 */
export function parseCsvRecords(text: string): string[][] {
  const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text
  const records: string[][] = []
  let record: string[] = []
  let cell = ''
  let quoted = false
  let cellStarted = false
  let i = 0
  const endRecord = () => {
    record.push(cell)
    if (!(record.length === 1 && record[0] === '' && !cellStarted)) records.push(record)
    record = []; cell = ''; cellStarted = false
  }
  while (i < src.length) {
    const ch = src[i]!
    if (quoted) {
      if (ch === '"') {
        if (src[i + 1] === '"') { cell += '"'; i += 2; continue }
        quoted = false; i += 1
        const next = src[i]
        if (next !== undefined && next !== ',' && next !== '\n' && next !== '\r') {
          throw new CsvSyntaxError('a closing quote must end its cell', records.length + 1)
        }
        continue
      }
      cell += ch; i += 1; continue
    }
    if (ch === '"' && cell === '') { quoted = true; cellStarted = true; i += 1; continue }
    if (ch === ',') { record.push(cell); cell = ''; cellStarted = true; i += 1; continue }
    if (ch === '\r' || ch === '\n') {
      endRecord()
      i += ch === '\r' && src[i + 1] === '\n' ? 2 : 1
      continue
    }
    cell += ch; cellStarted = true; i += 1
  }
  if (quoted) throw new CsvSyntaxError('a quoted cell is not closed', records.length + 1)
  if (cell !== '' || record.length || cellStarted) endRecord()
  return records
}
