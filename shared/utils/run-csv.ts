// Test runs written as CSV, one row per measurement: rows with the same id, one after another, form one run
// body as the station API takes it.
import { csvLine, CsvSyntaxError, csvUnescapeCell, parseCsvRecords } from './csv'

export const RUN_CSV_COLUMNS = [
  'id', 'serial', 'partNumber', 'lot', 'step', 'startedAt', 'finishedAt', 'operator', 'stationVerdict',
  'name', 'value', 'unit', 'uncertainty', 'offsetHz', 'harmonic',
] as const
export type RunCsvColumn = (typeof RUN_CSV_COLUMNS)[number]

/** Without these a row cannot make a valid run; the others may be left out of the header. */
export const REQUIRED_RUN_CSV_COLUMNS: readonly RunCsvColumn[] = ['id', 'serial', 'partNumber', 'lot', 'startedAt', 'finishedAt', 'name', 'value', 'unit']

const RUN_FIELDS: readonly RunCsvColumn[] = ['id', 'serial', 'partNumber', 'lot', 'step', 'startedAt', 'finishedAt', 'operator', 'stationVerdict']
const MEASUREMENT_FIELDS: readonly RunCsvColumn[] = ['name', 'value', 'unit', 'uncertainty', 'offsetHz', 'harmonic']
const NUMERIC = new Set<RunCsvColumn>(['value', 'uncertainty', 'offsetHz', 'harmonic'])
/** One more than the schema allows, so that an oversized run still fails on its measurement count. */
export const MAX_CSV_MEASUREMENTS = 501

export type RunCsvHeader =
  | { ok: true; columns: (RunCsvColumn | null)[] }
  | { ok: false; unknown: string[]; missing: RunCsvColumn[]; duplicate: RunCsvColumn[] }

const byLowerName = new Map(RUN_CSV_COLUMNS.map((c) => [c.toLowerCase(), c]))

/** Maps header cells to columns, matched without regard to case; names unknown, missing and repeated columns otherwise. */
export function checkRunCsvHeader(cells: string[]): RunCsvHeader {
  const unknown: string[] = []
  const duplicate: RunCsvColumn[] = []
  const columns: (RunCsvColumn | null)[] = []
  const seen = new Set<RunCsvColumn>()
  for (const raw of cells) {
    const name = raw.trim()
    const col = byLowerName.get(name.toLowerCase())
    if (!col) { unknown.push(name); columns.push(null); continue }
    if (seen.has(col)) duplicate.push(col)
    seen.add(col)
    columns.push(col)
  }
  const missing = REQUIRED_RUN_CSV_COLUMNS.filter((c) => !seen.has(c))
  if (unknown.length || missing.length || duplicate.length) return { ok: false, unknown, missing, duplicate }
  return { ok: true, columns }
}

export function describeHeaderProblem(h: Extract<RunCsvHeader, { ok: false }>): string[] {
  const out: string[] = []
  for (const u of h.unknown) out.push(u ? `unknown column "${u}"` : 'a column without a name')
  for (const m of h.missing) out.push(`missing column "${m}"`)
  for (const d of h.duplicate) out.push(`column "${d}" appears twice`)
  return out
}

/**
 * Joins physical lines into CSV records: a line break inside a quoted cell continues the record.
 * A record still open beyond maxChars is given up, so one stray quote cannot swallow the rest of a file.
 */
export class CsvRecordJoiner {
  private text = ''
  private first = 0
  private quotes = 0
  constructor(private maxChars = 65_536) {}

  push(line: string, number: number): { line: number; text: string; error?: string } | undefined {
    if (this.text === '' && this.quotes === 0) this.first = number
    else this.text += '\n'
    this.text += line
    for (let i = 0; i < line.length; i++) if (line.charCodeAt(i) === 34) this.quotes++
    if (this.quotes % 2 === 0) return this.take()
    if (this.text.length > this.maxChars) return this.take(`a quoted cell is not closed within ${this.maxChars} characters`)
    return undefined
  }

  end(): { line: number; text: string; error?: string } | undefined {
    return this.text === '' && this.quotes === 0 ? undefined : this.take('a quoted cell is not closed at the end of the file')
  }

  private take(error?: string) {
    const r = { line: this.first, text: this.text, ...(error ? { error } : {}) }
    this.text = ''
    this.quotes = 0
    return r
  }
}

/** The cells of one record, un-escaped; undefined for an empty record. Throws CsvSyntaxError. */
export function parseCsvRecord(text: string): string[] | undefined {
  const records = parseCsvRecords(text)
  if (records.length > 1) throw new CsvSyntaxError('a record must not contain a bare line break', 1)
  return records[0]?.map(csvUnescapeCell)
}

const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/

/** A numeric cell as a number; anything else stays text so that the run schema names the field. */
export function csvNumber(cell: string): number | string {
  return DECIMAL.test(cell) ? Number(cell) : cell
}

export type CsvRunRow = { line: number; cells: string[] } | { line: number; error: string; text: string }

export type CsvRun = {
  id: string
  firstLine: number
  lastLine: number
  body: Record<string, unknown>
  /** Line of each measurement, by its index in body.measurements. */
  measurementLines: number[]
  /** Characters of its rows, roughly what the run holds in memory. */
  bytes: number
  /** A row of the run that could not be read; the run is not posted. */
  problem?: { line: number; reason: string }
}

/** Groups rows into runs: a run ends where the id changes. */
export class CsvRunAssembler {
  private current: CsvRun | undefined
  private idIndex: number

  constructor(private columns: readonly (RunCsvColumn | null)[]) {
    this.idIndex = columns.indexOf('id')
  }

  /** Adds one record; returns the run it completed, if it started a new one. */
  push(row: CsvRunRow): CsvRun | undefined {
    if ('error' in row) {
      const id = this.lenientId(row.text)
      const done = this.current && this.current.id !== id ? this.take() : undefined
      const run = this.current ?? this.start(id, row.line)
      run.lastLine = row.line
      run.bytes += row.text.length
      run.problem ??= { line: row.line, reason: row.error }
      return done
    }
    const id = (row.cells[this.idIndex] ?? '').trim()
    const done = this.current && this.current.id !== id ? this.take() : undefined
    const run = this.current ?? this.start(id, row.line)
    run.lastLine = row.line
    for (const c of row.cells) run.bytes += c.length + 1
    if (run.problem) return done
    if (row.cells.length !== this.columns.length) {
      run.problem = { line: row.line, reason: `the row has ${row.cells.length} cells, the header ${this.columns.length}` }
      return done
    }
    const value = (col: RunCsvColumn) => {
      const i = this.columns.indexOf(col)
      return i < 0 ? '' : row.cells[i]!.trim()
    }
    if (run.measurementLines.length === 0) {
      for (const f of RUN_FIELDS) {
        const v = value(f)
        if (v !== '') run.body[f] = v
      }
    } else {
      for (const f of RUN_FIELDS) {
        const v = value(f)
        if (v !== (run.body[f] ?? '')) {
          run.problem = { line: row.line, reason: `${f} "${v}" differs from "${run.body[f] ?? ''}" on line ${run.firstLine} of the same run` }
          return done
        }
      }
    }
    const measurements = run.body.measurements as Record<string, unknown>[]
    if (measurements.length < MAX_CSV_MEASUREMENTS) {
      const m: Record<string, unknown> = {}
      for (const f of MEASUREMENT_FIELDS) {
        const v = value(f)
        if (v !== '') m[f] = NUMERIC.has(f) ? csvNumber(v) : v
      }
      measurements.push(m)
    }
    run.measurementLines.push(row.line)
    return done
  }

  end(): CsvRun | undefined {
    return this.current ? this.take() : undefined
  }

  private start(id: string, line: number): CsvRun {
    this.current = { id, firstLine: line, lastLine: line, body: { measurements: [] }, measurementLines: [], bytes: 0 }
    return this.current
  }

  private take(): CsvRun {
    const run = this.current!
    this.current = undefined
    return run
  }

  // A record that does not parse still most likely starts with its id cell.
  private lenientId(text: string): string {
    const cells = text.split(',')
    return (cells[this.idIndex] ?? '').replace(/"/g, '').trim()
  }
}

/** Where a JSON Pointer into a run built from CSV points: the row and the column. */
export function locateCsvPointer(run: Pick<CsvRun, 'firstLine' | 'measurementLines'>, pointer: string): { line: number; field: string } {
  const parts = pointer.split('/').slice(1)
  if (parts[0] === 'measurements' && parts.length >= 2 && /^\d+$/.test(parts[1]!)) {
    const line = run.measurementLines[Number(parts[1])] ?? run.firstLine
    return { line, field: parts[2] ?? 'measurement' }
  }
  return { line: run.firstLine, field: parts[0] || 'run' }
}

export const REJECTION_CSV_HEADER = ['line', 'runId', 'status', 'reason']

/** One row of a rejections download; cells that a spreadsheet would run as formulas are escaped. */
export function rejectionCsvLine(r: { line: number; runId: string | null; status: number; reason: string }): string {
  return csvLine([r.line, r.runId, r.status, r.reason]) + '\r\n'
}
