// Finding a review by id for the services that read or change it: 404 for an id that does not exist.
import type { Knex } from 'knex'
import { findImpact, lockImpact, type ImpactRow } from '../../database/repositories/calibration-impacts'
import { RuleError } from '../rule-error'

const missing = () => new RuleError(404, 'No such calibration impact review.')

export async function existingImpact(db: Knex, id: number): Promise<ImpactRow> {
  const impact = await findImpact(db, id)
  if (!impact) throw missing()
  return impact
}

/** The review locked for the caller's transaction, so decisions, notices and closing take turns. */
export async function lockedImpact(trx: Knex.Transaction, id: number): Promise<ImpactRow> {
  const impact = await lockImpact(trx, id)
  if (!impact) throw missing()
  return impact
}
