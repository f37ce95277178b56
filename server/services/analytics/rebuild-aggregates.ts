import type { Knex } from 'knex'
import { ensureFoldLease, markFolded, takeFoldLease } from '../../database/repositories/fold-leases'
import { forgetRebuildMark, rebuildMarksOfLot, rebuildParamRows } from '../../database/repositories/param-stats'
import { recountStepStats } from '../../database/repositories/step-stats'
import { rebuildLotBins } from '../ingest/fold-bins'
import { rebuildUnitStandings } from '../../database/repositories/unit-standing'
import { rebuildTrendOfLot } from '../ingest/param-trend-fold'
import { writeTransaction } from '../../database/write-retries'

/**
 * Recomputes a lot's aggregate rows from its stored runs and measurements inside `trx`, whose caller holds the
 * lot's fold lease. Runs still queued for the fold are left out here and left in the queue, so the fold adds them
 * once, afterwards.
 */
export async function rebuildLotAggregatesIn(trx: Knex.Transaction, lotId: number): Promise<void> {
  // the marks present now are what this rebuild answers; a write marking rows meanwhile keeps its mark for the fold
  const marks = await rebuildMarksOfLot(trx, lotId, { forUpdate: true })
  await rebuildParamRows(trx, { lotId })
  await rebuildLotBins(trx, lotId)
  for (const m of marks) await forgetRebuildMark(trx, m)
  await rebuildTrendOfLot(trx, lotId)
  await recountStepStats(trx, lotId)
  await rebuildUnitStandings(trx, lotId)
  await markFolded(trx, lotId)
}

/** The same in its own transaction, taking the lot's lease first: for bulk loads and repair. */
export async function rebuildLotAggregates(db: Knex, lotId: number): Promise<void> {
  await ensureFoldLease(db, lotId)
  await writeTransaction(db, async (trx) => {
    if ((await takeFoldLease(trx, lotId, 30)) !== 'taken') throw new Error(`the fold lease of lot ${lotId} could not be taken`)
    await rebuildLotAggregatesIn(trx, lotId)
  })
}
