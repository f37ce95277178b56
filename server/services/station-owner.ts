import type { Knex } from 'knex'
import { writeAudit } from '../database/repositories/audit'
import { findStation, stationOwnerCandidates, updateStationOwner } from '../database/repositories/stations'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

/** Sets (or clears, with null) the person responsible for a station: an active staff user. */
export async function setStationOwner(db: Knex, actorId: number, stationId: number, ownerUserId: number | null, now = new Date()) {
  return writeTransaction(db, async (trx) => {
    const station = await findStation(trx, stationId, now)
    if (!station) throw new RuleError(404, 'No such station.')
    if (ownerUserId !== null && !(await stationOwnerCandidates(trx)).some((u) => u.id === ownerUserId)) {
      throw new RuleError(422, 'A station is owned by an active staff user.', [{ pointer: '/ownerUserId', message: 'not an active staff user' }])
    }
    await trx('stations').where({ id: stationId }).forUpdate().first('id')
    await writeAudit(trx, { userId: actorId, action: 'owner', entity: 'station', entityId: stationId, before: { ownerUserId: station.owner?.id ?? null }, after: { ownerUserId } })
    await updateStationOwner(trx, stationId, ownerUserId)
    return { ownerUserId }
  })
}

export async function ownerCandidates(db: Knex) {
  return { people: await stationOwnerCandidates(db) }
}
