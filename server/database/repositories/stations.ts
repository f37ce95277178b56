import type { Knex } from 'knex'

export type StationRow = {
  id: number
  name: string
  location: string | null
  description: string | null
  lastSeenAt: Date | null
  createdAt: Date
  runsToday: number
  lastVerdict: 'pass' | 'fail' | null
  activeTokenHint: string | null
  owner: { id: number; name: string } | null
}

export type TokenRow = { id: number; hint: string; createdAt: Date; createdBy: string | null; revokedAt: Date | null; lastUsedAt: Date | null }

/** `todayFrom`: the instant the plant day began (services/plant-day.ts); runs finished since then are "today". */
function base(db: Knex, todayFrom: Date) {
  return db('stations as s').select(
    's.id', 's.name', 's.location', 's.description', 's.last_seen_at', 's.created_at', 's.owner_user_id',
    db('users as o').select('o.name').whereRaw('o.id = s.owner_user_id').as('owner_name'),
    db('test_runs as r').count('*').whereRaw('r.station_id = s.id').where('r.finished_at', '>=', todayFrom).as('runs_today'),
    db('test_runs as r').select('r.server_verdict').whereRaw('r.station_id = s.id')
      .orderBy('r.finished_at', 'desc').orderBy('r.id', 'desc').limit(1).as('last_verdict'),
    db('station_tokens as t').select('t.hint').whereRaw('t.station_id = s.id').whereNull('t.revoked_at')
      .orderBy('t.created_at', 'desc').orderBy('t.id', 'desc').limit(1).as('active_hint'),
  )
}

function toStation(r: any): StationRow {
  return {
    id: r.id, name: r.name, location: r.location ?? null, description: r.description ?? null,
    lastSeenAt: r.last_seen_at ?? null, createdAt: r.created_at, runsToday: Number(r.runs_today ?? 0),
    lastVerdict: r.last_verdict ?? null, activeTokenHint: r.active_hint ?? null,
    owner: r.owner_user_id ? { id: Number(r.owner_user_id), name: r.owner_name } : null,
  }
}

export async function listStations(db: Knex, todayFrom: Date): Promise<StationRow[]> {
  return (await base(db, todayFrom).orderBy('s.name')).map(toStation)
}

export async function findStation(db: Knex, id: number, todayFrom: Date): Promise<StationRow | undefined> {
  const r = await base(db, todayFrom).where('s.id', id).first()
  return r ? toStation(r) : undefined
}

/** Locks the station row for the rest of the transaction, so concurrent token writes queue up. */
export async function lockStation(trx: Knex.Transaction, id: number): Promise<boolean> {
  return !!(await trx('stations').where({ id }).forUpdate().first('id'))
}

export async function insertStation(db: Knex, s: { name: string; location: string | null; description: string | null }): Promise<number> {
  const [id] = await db('stations').insert({ name: s.name, location: s.location, description: s.description })
  return id!
}

/** Token history without the hashes, newest first. */
export async function listTokens(db: Knex, stationId: number): Promise<TokenRow[]> {
  const rows = await db('station_tokens as t').leftJoin('users as u', 'u.id', 't.created_by')
    .where('t.station_id', stationId).orderBy('t.created_at', 'desc').orderBy('t.id', 'desc')
    .select('t.id', 't.hint', 't.created_at', 'u.name as created_by', 't.revoked_at', 't.last_used_at')
  return rows.map((r: any) => ({
    id: r.id, hint: r.hint, createdAt: r.created_at, createdBy: r.created_by ?? null, revokedAt: r.revoked_at ?? null, lastUsedAt: r.last_used_at ?? null,
  }))
}

export async function activeTokenHints(db: Knex, stationId: number): Promise<string[]> {
  const rows = await db('station_tokens').where({ station_id: stationId }).whereNull('revoked_at').orderBy('id').select('hint')
  return rows.map((r: any) => r.hint)
}

export async function updateStationOwner(trx: Knex.Transaction, id: number, ownerUserId: number | null): Promise<void> {
  await trx('stations').where({ id }).update({ owner_user_id: ownerUserId })
}

/** Signed-in staff who may own a station, by name. */
export async function stationOwnerCandidates(db: Knex): Promise<{ id: number; name: string; role: string }[]> {
  return db('users').whereIn('role', ['admin', 'quality', 'engineer', 'operator']).where({ disabled: false }).orderBy('name').select('id', 'name', 'role')
}
