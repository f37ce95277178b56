// Opening the impact review of a calibration record found out of tolerance: in the transaction that enters the record,
// or on first view for records entered before reviews existed. The window is fixed when the review opens.
import type { Knex } from 'knex'
import { impactWindow } from '../../../shared/utils/calibration-impact'
import { writeAudit } from '../../database/repositories/audit'
import { closeImpactRow, countWindow, impactRecordsOf, insertImpact, recordsWithoutReview, setImpactCounts } from '../../database/repositories/calibration-impacts'
import { writeTransaction } from '../../database/write-retries'

/** Opens the review of one record inside the caller's transaction; null when the record is not out of tolerance or already has one. */
export async function openImpactReview(trx: Knex, recordId: number, instrumentId: number, actorId: number | null, now = new Date()): Promise<number | null> {
  const records = await impactRecordsOf(trx, instrumentId)
  const target = records.find((r) => r.id === recordId)
  const window = target ? impactWindow(records, target) : null
  if (!window) return null
  const id = await insertImpact(trx, {
    recordId, instrumentId, from: window.from, to: window.to, basis: window.basis.kind, basisRecordId: window.basis.recordId, openedBy: actorId, at: now,
  })
  if (id === null) return null
  const counts = await countWindow(trx, { instrumentId, from: window.from, to: window.to })
  await setImpactCounts(trx, id, counts)
  await writeAudit(trx, {
    userId: actorId, action: 'calibration_impact_open', entity: 'calibration_impact', entityId: id,
    after: { recordId, instrumentId, window: { from: window.from.toISOString(), to: window.to.toISOString(), basis: window.basis }, counts },
  })
  // Nothing was measured with the instrument in the window: there is nothing to decide or tell anyone, so the review
  // closes as it opens rather than waiting on the list for a person to close an empty page.
  if (counts.runs === 0) {
    await closeImpactRow(trx, id, null, now)
    await writeAudit(trx, {
      userId: actorId, action: 'calibration_impact_close', entity: 'calibration_impact', entityId: id,
      before: { status: 'open' }, after: { status: 'closed', counts, reason: 'no run was measured with the instrument in the window' },
    })
  }
  return id
}

/** Opens the reviews missing for out-of-tolerance records, each in its own short transaction. */
export async function openMissingReviews(db: Knex, actorId: number | null): Promise<number> {
  let opened = 0
  for (const r of await recordsWithoutReview(db)) {
    if (await writeTransaction(db, (trx) => openImpactReview(trx, r.id, r.instrumentId, actorId)) !== null) opened++
  }
  return opened
}
