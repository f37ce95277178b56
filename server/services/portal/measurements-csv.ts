// The measured data of a shipment's units as CSV: one row per unit, step, attempt and measurement, written while the
// units are read a page at a time (shared/utils/csv.ts conventions: numbers in full, units in their own column).
import type { Knex } from 'knex'
import { measurementsOfUnits, shipmentUnitsPage } from '../../database/repositories/portal'
import { csvLine, type CsvValue } from '../../../shared/utils/csv'
import { measurementLabel } from '../../../shared/utils/measurement-display'

export const MEASUREMENT_CSV_HEADER = [
  'serial', 'part', 'lot', 'step', 'attempt', 'tested at (UTC)', 'parameter', 'qualifier (offset [Hz] or harmonic)',
  'value', 'unit', 'LSL', 'USL', 'verdict',
]

const UNITS_PER_PAGE = 40
const QUALIFIED = new Set(['phase_noise', 'harmonic_rejection'])
const VERDICT: Record<string, string> = { pass: 'pass', fail: 'fail', info: 'not judged' }

/**
 * Lines of the CSV, each chunk ending in CRLF. A unit that came back from this shipment contributes the runs that
 * started before its return only: later runs belong to its next shipment.
 */
export async function* shipmentMeasurementsCsv(db: Knex, shipmentId: number): AsyncGenerator<string> {
  yield csvLine(MEASUREMENT_CSV_HEADER) + '\r\n'
  let after = 0
  for (;;) {
    const units = await shipmentUnitsPage(db, shipmentId, after, UNITS_PER_PAGE)
    if (!units.length) return
    after = units[units.length - 1]!.unitId
    const rows = await measurementsOfUnits(db, units.map((u) => u.unitId))
    const byUnit = new Map(units.map((u) => [u.unitId, u]))
    const order = (u: typeof units[number], step: string) => { const i = u.steps.indexOf(step); return i < 0 ? u.steps.length : i }
    const kept = rows.filter((r) => { const u = byUnit.get(r.unitId)!; return !u.until || r.startedAt.getTime() <= new Date(u.until).getTime() })
    // serial, then the product's step order, then attempt; the sort is stable, so measurements keep their order
    kept.sort((a, b) => {
      const ua = byUnit.get(a.unitId)!
      const ub = byUnit.get(b.unitId)!
      return ua.serial.localeCompare(ub.serial) || a.unitId - b.unitId || order(ua, a.step) - order(ub, b.step) || a.attempt - b.attempt
    })
    const lines: string[] = []
    for (const r of kept) {
      const u = byUnit.get(r.unitId)!
      const cells: CsvValue[] = [
        u.serial, u.partNumber, u.lot, r.step, r.attempt, new Date(r.startedAt).toISOString(), measurementLabel({ name: r.name }),
        QUALIFIED.has(r.name) ? r.qualifier : null, r.value, r.unit, r.lsl, r.usl, VERDICT[r.verdict] ?? r.verdict,
      ]
      lines.push(csvLine(cells) + '\r\n')
    }
    if (lines.length) yield lines.join('')
  }
}
