// The worked example on the station software page: one tune-step run of the demo doubler, what Tercet answers to it,
// and the historical import's CSV template built from the same run. A unit test validates the request with the
// station's own run validator; an end-to-end test posts it and compares the answer.
import { csvLine } from './csv'
import { RUN_CSV_COLUMNS } from './run-csv'

export const EXAMPLE_RUN = {
  id: '5b0e7a52-3c1d-4f8e-9a61-2d7c4b9e0f13',
  serial: 'D2-0412',
  partNumber: 'VFW-D2-250',
  lot: 'D2-2611-A',
  step: 'tune',
  startedAt: '2026-11-24T08:14:05.000Z',
  finishedAt: '2026-11-24T08:14:52.000Z',
  operator: 'jpell',
  software: { sequence: 'vfw-d2-250-tune', version: '3.2.0' },
  conditions: { temperatureC: 23.4, supplyV: 5.002 },
  stationVerdict: 'pass',
  measurements: [
    { name: 'output_power', value: 10.12, unit: 'dBm', uncertainty: 0.3 },
    { name: 'supply_current', value: 61.8, unit: 'mA' },
  ],
} as const

/** The 201 answer to EXAMPLE_RUN (a replay of the same body answers 200 with the same run). */
export const EXAMPLE_RESPONSE = {
  id: EXAMPLE_RUN.id,
  serial: EXAMPLE_RUN.serial,
  partNumber: EXAMPLE_RUN.partNumber,
  lot: EXAMPLE_RUN.lot,
  step: 'tune',
  attempt: 1,
  station: 'ATE-D2-01',
  startedAt: EXAMPLE_RUN.startedAt,
  finishedAt: EXAMPLE_RUN.finishedAt,
  verdict: 'pass',
  stationVerdict: 'pass',
  verdictDisagrees: false,
  incomplete: false,
  missingRequired: [],
  calibrationLapsed: false,
  measurementIssue: false,
  revision: 1,
  measurements: [
    {
      name: 'output_power', value: 10.12, unit: 'dBm', uncertainty: 0.3,
      limit: { lsl: 8, usl: 12, target: 10, rule: 'simple', guardBand: 0.3 },
      verdict: 'pass', zone: 'inside', derived: false, excessDb: null, implausible: false,
    },
    {
      name: 'supply_current', value: 61.8, unit: 'mA', uncertainty: null,
      limit: null, verdict: 'info', zone: null, derived: false, excessDb: null, implausible: false,
    },
  ],
}

type ExampleRun = { id: string; serial: string; partNumber: string; lot: string; step?: string; startedAt: string; finishedAt: string
  operator?: string; stationVerdict?: string
  measurements: readonly { name: string; value: number; unit: string; uncertainty?: number; offsetHz?: number; harmonic?: number }[] }

/** The first measurement of the example alone: a run the import takes from one line. */
export const EXAMPLE_IMPORT_RUN: ExampleRun = { ...EXAMPLE_RUN, measurements: [EXAMPLE_RUN.measurements[0]] }

/** The historical import's CSV: the header, then one row per measurement of the run (rows of one run share its id). */
export function importTemplateCsv(run: ExampleRun = EXAMPLE_IMPORT_RUN): string {
  const lines = [csvLine([...RUN_CSV_COLUMNS])]
  for (const m of run.measurements) {
    const cells: Record<string, string | number | undefined> = {
      id: run.id, serial: run.serial, partNumber: run.partNumber, lot: run.lot, step: run.step, startedAt: run.startedAt,
      finishedAt: run.finishedAt, operator: run.operator, stationVerdict: run.stationVerdict,
      name: m.name, value: m.value, unit: m.unit, uncertainty: m.uncertainty, offsetHz: m.offsetHz, harmonic: m.harmonic,
    }
    lines.push(csvLine(RUN_CSV_COLUMNS.map((c) => cells[c] ?? '')))
  }
  return lines.join('\r\n') + '\r\n'
}
