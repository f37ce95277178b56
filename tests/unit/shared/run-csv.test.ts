import { describe, expect, it } from 'vitest'
import { parseCsvRecords } from '../../../shared/utils/csv'
import {
  checkRunCsvHeader, CsvRecordJoiner, CsvRunAssembler, csvNumber, describeHeaderProblem, locateCsvPointer, MAX_CSV_MEASUREMENTS,
  parseCsvRecord, rejectionCsvLine, RUN_CSV_COLUMNS, type CsvRun, type RunCsvColumn,
} from '../../../shared/utils/run-csv'

const HEADER = [...RUN_CSV_COLUMNS]
const ID_A = '11111111-1111-4111-8111-111111111111'
const ID_B = '22222222-2222-4222-8222-222222222222'

function row(over: Partial<Record<RunCsvColumn, string>> = {}): string[] {
  const base: Record<RunCsvColumn, string> = {
    id: ID_A, serial: 'S-1', partNumber: 'VFW-T3-375', lot: 'L-1', step: 'final', startedAt: '2026-11-20T08:00:00Z',
    finishedAt: '2026-11-20T08:01:30Z', operator: 'jpell', stationVerdict: 'pass', name: 'output_power', value: '7.1',
    unit: 'dBm', uncertainty: '0.3', offsetHz: '', harmonic: '',
  }
  const r = { ...base, ...over }
  return HEADER.map((c) => r[c])
}

function assemble(rows: { line: number; cells?: string[]; error?: string; text?: string }[], columns: (RunCsvColumn | null)[] = HEADER): CsvRun[] {
  const a = new CsvRunAssembler(columns)
  const out: CsvRun[] = []
  for (const r of rows) {
    const done = a.push(r.error ? { line: r.line, error: r.error, text: r.text ?? '' } : { line: r.line, cells: r.cells! })
    if (done) out.push(done)
  }
  const last = a.end()
  if (last) out.push(last)
  return out
}

describe('checkRunCsvHeader', () => {
  it('accepts the columns in any order and any case, optional ones left out', () => {
    const h = checkRunCsvHeader(['Value', 'unit', 'name', 'finishedAt', 'startedAt', 'lot', 'PARTNUMBER', 'serial', 'id'])
    expect(h.ok).toBe(true)
    if (h.ok) expect(h.columns).toEqual(['value', 'unit', 'name', 'finishedAt', 'startedAt', 'lot', 'partNumber', 'serial', 'id'])
  })

  it('names unknown, missing and repeated columns', () => {
    const h = checkRunCsvHeader([...HEADER.filter((c) => c !== 'unit' && c !== 'lot'), 'colour', 'serial'])
    expect(h.ok).toBe(false)
    if (h.ok) return
    expect(h.unknown).toEqual(['colour'])
    expect(h.missing).toEqual(['lot', 'unit'])
    expect(h.duplicate).toEqual(['serial'])
    expect(describeHeaderProblem(h)).toEqual(['unknown column "colour"', 'missing column "lot"', 'missing column "unit"', 'column "serial" appears twice'])
  })
})

describe('CsvRecordJoiner', () => {
  it('passes plain lines through and joins a quoted cell broken over lines', () => {
    const j = new CsvRecordJoiner()
    expect(j.push('a,b', 1)).toEqual({ line: 1, text: 'a,b' })
    expect(j.push('c,"two', 2)).toBeUndefined()
    expect(j.push('lines",d', 3)).toEqual({ line: 2, text: 'c,"two\nlines",d' })
    expect(parseCsvRecord('c,"two\nlines",d')).toEqual(['c', 'two\nlines', 'd'])
    expect(j.end()).toBeUndefined()
  })

  it('gives up a record whose quote stays open', () => {
    const j = new CsvRecordJoiner(10)
    expect(j.push('"abc', 4)).toBeUndefined()
    const r = j.push('defghijk', 5)
    expect(r?.line).toBe(4)
    expect(r?.error).toMatch(/not closed/)
    expect(j.push('"open', 6)).toBeUndefined()
    expect(j.end()?.error).toMatch(/end of the file/)
  })
})

describe('parseCsvRecord', () => {
  it('un-escapes cells that were protected against formulas', () => {
    expect(parseCsvRecord("'-5,'=x,plain,\"q,\"\"r\"\"\"")).toEqual(['-5', '=x', 'plain', 'q,"r"'])
  })

  it('is undefined for an empty record and throws on a broken quote', () => {
    expect(parseCsvRecord('')).toBeUndefined()
    expect(() => parseCsvRecord('"a"b,c')).toThrow(/closing quote/)
  })
})

describe('csvNumber', () => {
  it('reads decimal numbers and leaves anything else as text', () => {
    expect(csvNumber('7.25')).toBe(7.25)
    expect(csvNumber('-1e-3')).toBe(-0.001)
    expect(csvNumber('.5')).toBe(0.5)
    expect(csvNumber('3')).toBe(3)
    for (const s of ['abc', '0x10', 'Infinity', '1,5', '']) expect(csvNumber(s)).toBe(s)
  })
})

describe('CsvRunAssembler', () => {
  it('builds one run body per id from consecutive rows, leaving empty cells out', () => {
    const runs = assemble([
      { line: 2, cells: row() },
      { line: 3, cells: row({ name: 'harmonic_rejection', value: '33', unit: 'dB', uncertainty: '', harmonic: '2' }) },
      { line: 4, cells: row({ id: ID_B, serial: 'S-2', step: '', operator: '', stationVerdict: '', name: 'phase_noise', value: '-137', unit: 'dBc/Hz', uncertainty: '', offsetHz: '1000' }) },
    ])
    expect(runs).toHaveLength(2)
    expect(runs[0]).toMatchObject({ id: ID_A, firstLine: 2, lastLine: 3, measurementLines: [2, 3] })
    expect(runs[0]!.body).toEqual({
      id: ID_A, serial: 'S-1', partNumber: 'VFW-T3-375', lot: 'L-1', step: 'final', startedAt: '2026-11-20T08:00:00Z',
      finishedAt: '2026-11-20T08:01:30Z', operator: 'jpell', stationVerdict: 'pass',
      measurements: [
        { name: 'output_power', value: 7.1, unit: 'dBm', uncertainty: 0.3 },
        { name: 'harmonic_rejection', value: 33, unit: 'dB', harmonic: 2 },
      ],
    })
    expect(runs[1]!.body).toEqual({
      id: ID_B, serial: 'S-2', partNumber: 'VFW-T3-375', lot: 'L-1', startedAt: '2026-11-20T08:00:00Z', finishedAt: '2026-11-20T08:01:30Z',
      measurements: [{ name: 'phase_noise', value: -137, unit: 'dBc/Hz', offsetHz: 1000 }],
    })
    expect(runs[1]!.problem).toBeUndefined()
  })

  it('keeps a non-numeric value as text so that the schema can name it', () => {
    const [run] = assemble([{ line: 2, cells: row({ value: 'n/a' }) }])
    expect((run!.body.measurements as any[])[0].value).toBe('n/a')
  })

  it('refuses a run whose run columns change between its rows, at the row that differs', () => {
    const runs = assemble([
      { line: 2, cells: row() },
      { line: 3, cells: row({ serial: 'S-9', name: 'supply_current', value: '78', unit: 'mA' }) },
      { line: 4, cells: row({ id: ID_B }) },
    ])
    expect(runs[0]!.problem).toEqual({ line: 3, reason: 'serial "S-9" differs from "S-1" on line 2 of the same run' })
    expect(runs[1]!.problem).toBeUndefined()
  })

  it('refuses a run with a row of the wrong width, and one with an unreadable row', () => {
    const runs = assemble([
      { line: 2, cells: row() },
      { line: 3, cells: row().slice(0, 14) },
      { line: 4, error: 'a closing quote must end its cell', text: `${ID_B},"S-2"x,…` },
      { line: 5, cells: row({ id: ID_B }) },
    ])
    expect(runs).toHaveLength(2)
    expect(runs[0]!.problem).toEqual({ line: 3, reason: 'the row has 14 cells, the header 15' })
    expect(runs[1]!.id).toBe(ID_B)
    expect(runs[1]!.problem).toEqual({ line: 4, reason: 'a closing quote must end its cell' })
  })

  it('stops collecting measurements one past the schema limit', () => {
    const rows = Array.from({ length: MAX_CSV_MEASUREMENTS + 20 }, (_, i) => ({ line: i + 2, cells: row() }))
    const [run] = assemble(rows)
    expect((run!.body.measurements as unknown[]).length).toBe(MAX_CSV_MEASUREMENTS)
    expect(run!.lastLine).toBe(MAX_CSV_MEASUREMENTS + 21)
  })
})

describe('locateCsvPointer', () => {
  const run = { firstLine: 10, measurementLines: [10, 11, 12] }
  it('maps measurement pointers to their rows and run pointers to the first row', () => {
    expect(locateCsvPointer(run, '/measurements/2/value')).toEqual({ line: 12, field: 'value' })
    expect(locateCsvPointer(run, '/measurements/1')).toEqual({ line: 11, field: 'measurement' })
    expect(locateCsvPointer(run, '/serial')).toEqual({ line: 10, field: 'serial' })
    expect(locateCsvPointer(run, '/measurements')).toEqual({ line: 10, field: 'measurements' })
    expect(locateCsvPointer(run, '')).toEqual({ line: 10, field: 'run' })
  })
})

describe('rejectionCsvLine', () => {
  it('escapes formula-looking cells and quotes commas, so the row reads back as written', () => {
    const line = rejectionCsvLine({ line: 7, runId: '=HYPERLINK("x")', status: 400, reason: '+1, then @SUM(A1)' })
    expect(line).toBe('7,"\'=HYPERLINK(""x"")",400,"\'+1, then @SUM(A1)"\r\n')
    expect(parseCsvRecords(line)[0]).toEqual(['7', '\'=HYPERLINK("x")', '400', "'+1, then @SUM(A1)"])
    expect(rejectionCsvLine({ line: 3, runId: null, status: 422, reason: '-x' })).toBe("3,,422,'-x\r\n")
  })
})
