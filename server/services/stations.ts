import type { Knex } from 'knex'
import { worstCalibration } from '../../shared/utils/calibration'
import type { StationCreated, StationDetail, StationSummary, StationToken } from '../../shared/types/station'
import { writeAudit } from '../database/repositories/audit'
import { recentStationRuns, stationExists } from '../database/repositories/station-runs'
import type { StationRecentRun } from '../../shared/types/station-runs'
import { insertToken, revokeTokens } from '../database/repositories/station-tokens'
import { bumpCacheVersion } from '../database/repositories/cache-versions'
import {
  activeTokenHints, findStation, insertStation, listStations, listTokens, lockStation, type StationRow, type TokenRow,
} from '../database/repositories/stations'
import { generateStationToken } from '../utils/station-token'
import { plantToday } from './plant-day'
import { currentInstrumentsOfStations, type CurrentInstrument } from './calibration/views'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

export type NewStation = { name: string; location?: string | null; description?: string | null }

const iso = (d: Date) => new Date(d).toISOString()
const isoOrNull = (d: Date | null) => (d ? iso(d) : null)

/** A station write refused for a reason the schema cannot express, pointing at the field. */
function refused(status: 400 | 409, message: string, pointer: string): RuleError {
  return new RuleError(status, message, [{ pointer, message }])
}

/** The station with the instruments it holds now, each with the state of its record in force now (history: calibration/). */
function view(s: StationRow, instruments: Map<number, CurrentInstrument[]>): StationSummary {
  const list = instruments.get(s.id) ?? []
  return { ...s, lastSeenAt: isoOrNull(s.lastSeenAt), createdAt: iso(s.createdAt), instruments: list, calibrationState: worstCalibration(list.map((i) => i.state)) }
}

function tokenView(t: TokenRow): StationToken {
  return { ...t, createdAt: iso(t.createdAt), revokedAt: isoOrNull(t.revokedAt), lastUsedAt: isoOrNull(t.lastUsedAt) }
}

function blankToNull(v: string | null | undefined): string | null {
  const t = v?.trim()
  return t ? t : null
}

export async function stationList(db: Knex, now = new Date()): Promise<StationSummary[]> {
  const stations = await listStations(db, (await plantToday(db, now)).start)
  const instruments = await currentInstrumentsOfStations(db, stations.map((s) => s.id), now)
  return stations.map((s) => view(s, instruments))
}

async function stationView(db: Knex, id: number, now = new Date()): Promise<StationSummary | undefined> {
  const s = await findStation(db, id, (await plantToday(db, now)).start)
  return s && view(s, await currentInstrumentsOfStations(db, [id], now))
}

export async function stationDetail(db: Knex, id: number, now = new Date()): Promise<StationDetail | undefined> {
  const station = await stationView(db, id, now)
  return station && { ...station, tokens: (await listTokens(db, id)).map(tokenView) }
}

/** Creates the station with its first token; the token is returned here and nowhere else. */
export async function createStation(db: Knex, actorId: number | null, input: NewStation): Promise<StationCreated> {
  const name = input.name.trim()
  if (!name) throw refused(400, 'The station name must not be blank.', '/name')
  const t = generateStationToken()
  try {
    return await writeTransaction(db, async (trx) => {
      const id = await insertStation(trx, { name, location: blankToNull(input.location), description: blankToNull(input.description) })
      await insertToken(trx, { stationId: id, tokenHash: t.hash, hint: t.hint, createdBy: actorId })
      await bumpCacheVersion(trx, 'tokens')
      const created = (await stationView(trx, id))!
      await writeAudit(trx, {
        userId: actorId, action: 'create', entity: 'station', entityId: id,
        after: { name: created.name, location: created.location, description: created.description, tokenHint: t.hint },
      })
      return { station: created, token: t.token }
    })
  } catch (e) {
    if ((e as any)?.code === 'ER_DUP_ENTRY') throw refused(409, `A station named "${name}" already exists.`, '/name')
    throw e
  }
}

/** Revokes every active token and issues a new one; undefined for an unknown station. */
export async function rotateStationToken(db: Knex, actorId: number | null, stationId: number): Promise<{ token: string; hint: string } | undefined> {
  const t = generateStationToken()
  return writeTransaction(db, async (trx) => {
    if (!(await lockStation(trx, stationId))) return undefined
    const revoked = await activeTokenHints(trx, stationId)
    await revokeTokens(trx, stationId)
    await insertToken(trx, { stationId, tokenHash: t.hash, hint: t.hint, createdBy: actorId })
    // every instance's verified tokens are dropped once this commits
    await bumpCacheVersion(trx, 'tokens')
    await writeAudit(trx, { userId: actorId, action: 'token_rotate', entity: 'station', entityId: stationId, before: { activeTokenHints: revoked }, after: { activeTokenHints: [t.hint] } })
    return { token: t.token, hint: t.hint }
  })
}

/** Revokes every active token: the station can no longer post until a new token is issued. */
export async function revokeStationTokens(db: Knex, actorId: number | null, stationId: number): Promise<{ revoked: number } | undefined> {
  return writeTransaction(db, async (trx) => {
    if (!(await lockStation(trx, stationId))) return undefined
    const hints = await activeTokenHints(trx, stationId)
    const revoked = await revokeTokens(trx, stationId)
    await bumpCacheVersion(trx, 'tokens')
    await writeAudit(trx, { userId: actorId, action: 'token_revoke', entity: 'station', entityId: stationId, before: { activeTokenHints: hints }, after: { activeTokenHints: [] } })
    return { revoked }
  })
}

/** The station's latest runs (at most `limit`), or undefined for a station that does not exist. */
export async function stationRecentRuns(db: Knex, id: number, limit = 20): Promise<StationRecentRun[] | undefined> {
  return (await stationExists(db, id)) ? recentStationRuns(db, id, limit) : undefined
}
