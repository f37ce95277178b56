import { describe, expect, it } from 'vitest'
import { EXAMPLE_RUN, EXAMPLE_RESPONSE, importTemplateCsv } from '../../../shared/utils/station-api-example'
import { validateRun } from '../../../server/utils/run-validator'
import { checkRunCsvHeader, CsvRunAssembler, parseCsvRecord, RUN_CSV_COLUMNS } from '../../../shared/utils/run-csv'

describe('the station page example', () => {
  it('is a run the station endpoint accepts', () => {
    const r = validateRun(structuredClone(EXAMPLE_RUN))
    expect(r.ok ? [] : r.errors).toEqual([])
  })

  it('answers with the run it names', () => {
    expect(EXAMPLE_RESPONSE.id).toBe(EXAMPLE_RUN.id)
    expect(EXAMPLE_RESPONSE.measurements.map((m) => m.name)).toEqual(EXAMPLE_RUN.measurements.map((m) => m.name))
  })

  it('gives an import template the import reads back into a valid run', () => {
    const text = importTemplateCsv()
    const lines = text.split('\r\n').filter(Boolean)
    expect(lines).toHaveLength(2)
    const header = checkRunCsvHeader(parseCsvRecord(lines[0]!)!)
    expect(header.ok).toBe(true)
    if (!header.ok) return
    expect(header.columns).toEqual([...RUN_CSV_COLUMNS])
    const assembler = new CsvRunAssembler(header.columns)
    expect(assembler.push({ line: 2, cells: parseCsvRecord(lines[1]!)! })).toBeUndefined()
    const run = assembler.end()!
    expect(run.problem).toBeUndefined()
    const v = validateRun(run.body)
    expect(v.ok ? [] : v.errors).toEqual([])
    expect(run.body).toMatchObject({ id: EXAMPLE_RUN.id, serial: EXAMPLE_RUN.serial, measurements: [EXAMPLE_RUN.measurements[0]] })
  })
})
