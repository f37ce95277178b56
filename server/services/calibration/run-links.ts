// What a run's own transaction adds for calibration: the instruments it was taken with, the record in force for
// each, and the guard that sends it back for judging when the history changed after it was judged.
import type { Statement } from '../../database/raw-connection'
import { calibrationGuard, runInstrumentsInsert } from '../../database/repositories/calibration-runs'
import type { RunCalibration } from './in-force'
import type { RunRef } from '../../database/repositories/run-writes'

export { runInstrumentsInsert } from '../../database/repositories/calibration-runs'

const LINKS_PER_STATEMENT = 1000

// The guard comes first: it takes the version row before the links' foreign keys touch instrument and record rows,
// the same order a history change takes them in, so the two never wait on each other crosswise.

/** For runs already inserted in the current transaction: one guard per history version, then link inserts in chunks. */
export function batchCalibrationStatements(items: readonly { runId: RunRef; calibration: RunCalibration }[]): Statement[] {
  const out: Statement[] = []
  const byVersion = new Map<number, RunRef[]>()
  for (const { runId, calibration } of items) byVersion.set(calibration.version, [...(byVersion.get(calibration.version) ?? []), runId])
  for (const [version, ids] of byVersion) {
    for (let i = 0; i < ids.length; i += LINKS_PER_STATEMENT) out.push(calibrationGuard(ids.slice(i, i + LINKS_PER_STATEMENT), version))
  }
  const links = items.flatMap(({ runId, calibration: c }) => c.instruments.map((i) => ({ runId, instrumentId: i.instrumentId, calibrationId: i.calibrationId, named: c.named })))
  for (let i = 0; i < links.length; i += LINKS_PER_STATEMENT) out.push(runInstrumentsInsert(links.slice(i, i + LINKS_PER_STATEMENT)))
  return out
}
