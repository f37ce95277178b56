import type { Knex } from 'knex'
import { causalQuery } from '../causal-read'

export type TokenMatch = { tokenId: number; stationId: number; stationName: string; tokenHash: string }

/** A causal read on a cluster: a token revoked through another instance is never found again. */
export async function findActiveTokensByHint(db: Knex, hint: string): Promise<TokenMatch[]> {
  const rows = await causalQuery(db, db('station_tokens as t').join('stations as s', 's.id', 't.station_id')
    .where('t.hint', hint).whereNull('t.revoked_at')
    .select('t.id', 't.station_id', 's.name', 't.token_hash'))
  return rows.map((r: any) => ({ tokenId: r.id, stationId: r.station_id, stationName: r.name, tokenHash: r.token_hash }))
}

export async function insertToken(db: Knex, t: { stationId: number; tokenHash: string; hint: string; createdBy: number | null }): Promise<number> {
  const [id] = await db('station_tokens').insert({ station_id: t.stationId, token_hash: t.tokenHash, hint: t.hint, created_by: t.createdBy })
  return id!
}

export async function revokeTokens(db: Knex, stationId: number): Promise<number> {
  return db('station_tokens').where({ station_id: stationId }).whereNull('revoked_at').update({ revoked_at: db.fn.now(3) })
}
