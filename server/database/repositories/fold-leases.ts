// One lease row per lot: a fold of the lot's statistics holds it for the length of its transaction and writes it,
// so two folds of one lot never run at once. Folds of different lots never wait for each other.
import type { Knex } from 'knex'

/**
 * Takes the lot's lease inside `trx`: waits up to `waitSeconds` for a fold in progress, or with 0 gives up at once
 * (SKIP LOCKED). 'missing' when the lot has no lease row yet (see ensureFoldLease).
 */
export async function takeFoldLease(trx: Knex.Transaction, lotId: number, waitSeconds: number): Promise<'taken' | 'busy' | 'missing'> {
  const [rows] = waitSeconds > 0
    ? await trx.raw(`SET STATEMENT innodb_lock_wait_timeout = ${Math.ceil(waitSeconds)} FOR SELECT lot_id FROM lot_fold_leases WHERE lot_id = ? FOR UPDATE`, [lotId])
    : await trx.raw('SELECT lot_id FROM lot_fold_leases WHERE lot_id = ? FOR UPDATE SKIP LOCKED', [lotId])
  if ((rows as unknown[]).length) return 'taken'
  // skipped because another fold holds it, or missing (a plain read does not wait)
  const [exists] = await trx.raw('SELECT 1 FROM lot_fold_leases WHERE lot_id = ?', [lotId])
  return (exists as unknown[]).length ? 'busy' : 'missing'
}

/**
 * Creates the lot's lease row, on its own and committed at once: created inside a fold's transaction, it would make
 * every other fold of the lot wait on an uncommitted row.
 */
export async function ensureFoldLease(db: Knex, lotId: number): Promise<void> {
  await db.raw('INSERT IGNORE INTO lot_fold_leases (lot_id) VALUES (?)', [lotId])
}

/** Writes the lease row, so that on a cluster two folds of one lot conflict at commit even across nodes. */
export async function markFolded(trx: Knex.Transaction, lotId: number): Promise<void> {
  await trx.raw('UPDATE lot_fold_leases SET folds = folds + 1, folded_at = NOW(3) WHERE lot_id = ?', [lotId])
}

/** Lots with queued runs, rows awaiting a rebuild or groups awaiting a repair, for the background folder. */
export async function lotsToFold(db: Knex, limit: number): Promise<number[]> {
  const [rows] = await db.raw(
    `(SELECT DISTINCT lot_id FROM lot_stats_pending LIMIT ${Number(limit)}) UNION (SELECT DISTINCT lot_id FROM lot_stats_rebuild LIMIT ${Number(limit)})
     UNION (SELECT DISTINCT lot_id FROM lot_stats_repair LIMIT ${Number(limit)})`)
  return (rows as { lot_id: number }[]).map((r) => Number(r.lot_id))
}
