import type { Knex } from 'knex'

/**
 * Marks the lot's product as having new results for the alert evaluator: one statement per fold of the lot (never
 * one per run), bumping `seq` so an evaluation in progress leaves the mark for the next one.
 */
export async function markProductOfLot(trx: Knex.Transaction, lotId: number): Promise<void> {
  await trx.raw(
    `INSERT INTO alert_marks (product_id, seq, marked_at) SELECT product_id, 1, NOW(3) FROM lots WHERE id = ?
     ON DUPLICATE KEY UPDATE seq = seq + 1, marked_at = VALUES(marked_at)`, [lotId])
}
