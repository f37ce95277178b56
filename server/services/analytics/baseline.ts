import type { Knex } from 'knex'
import { individualsLimits } from '../../../shared/utils/control'
import { writeAudit } from '../../database/repositories/audit'
import { findLotHeader } from '../../database/repositories/lot-stats'
import { deleteBaseline, findBaseline, parameterPoints, saveBaseline } from '../../database/repositories/parameter-values'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

export const BASELINE_DEFAULT = 25

export type BaselineRequest = { code: string; name: string; step: string; qualifier: number; points: number; userId: number }


/** Freezes the individuals-chart limits from the lot's first N first-attempt points. */
export async function freezeBaseline(db: Knex, r: BaselineRequest) {
  const lot = await findLotHeader(db, r.code)
  if (!lot) throw new RuleError(404, `No lot ${r.code}.`)
  const key = { lotId: lot.id, step: r.step, name: r.name, qualifier: r.qualifier }
  const pts = await parameterPoints(db, { ...key, firstOnly: true }, { head: r.points })
  const limits = individualsLimits(pts.map((p) => p.value))
  if (!limits || pts.length < r.points || !(limits.sigma > 0)) throw new RuleError(422, `The lot has fewer than ${r.points} usable points of this parameter.`)
  return writeTransaction(db, async (trx) => {
    const before = await findBaseline(trx, key)
    const b = { centre: limits.centre, sigma: limits.sigma, n: limits.n, setBy: r.userId }
    await saveBaseline(trx, key, b)
    await writeAudit(trx, { userId: r.userId, action: 'baseline_freeze', entity: 'control_baseline', entityId: `${r.code}/${r.step}/${r.name}/${r.qualifier}`, before: before ?? null, after: b })
    return { centre: b.centre, sigma: b.sigma, n: b.n, ucl: b.centre + 3 * b.sigma, lcl: b.centre - 3 * b.sigma }
  })
}

export async function releaseBaseline(db: Knex, r: Omit<BaselineRequest, 'points'>) {
  const lot = await findLotHeader(db, r.code)
  if (!lot) throw new RuleError(404, `No lot ${r.code}.`)
  const key = { lotId: lot.id, step: r.step, name: r.name, qualifier: r.qualifier }
  return writeTransaction(db, async (trx) => {
    const before = await findBaseline(trx, key)
    if (!before) throw new RuleError(404, 'No frozen baseline for this parameter.')
    await deleteBaseline(trx, key)
    await writeAudit(trx, { userId: r.userId, action: 'baseline_release', entity: 'control_baseline', entityId: `${r.code}/${r.step}/${r.name}/${r.qualifier}`, before, after: null })
  })
}
