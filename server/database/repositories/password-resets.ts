// Password-reset links: only the SHA-256 of each token is stored.
import type { Knex } from 'knex'

export type ResetRow = { id: number; userId: number; expiresAt: Date; usedAt: Date | null }

export async function insertReset(db: Knex, r: { tokenHash: Buffer; userId: number; createdAt: Date; expiresAt: Date; requestedFrom: string }): Promise<void> {
  await db('password_resets').insert({
    token_hash: r.tokenHash, user_id: r.userId, created_at: r.createdAt, expires_at: r.expiresAt, requested_from: r.requestedFrom.slice(0, 80),
  })
}

/** The row of a token hash; `lock` takes it FOR UPDATE so two uses of one link take turns. */
export async function findReset(db: Knex, tokenHash: Buffer, lock = false): Promise<ResetRow | undefined> {
  const q = db('password_resets').select('id', 'user_id', 'expires_at', 'used_at').where('token_hash', tokenHash).first()
  const r = await (lock ? q.forUpdate() : q)
  return r ? { id: r.id, userId: r.user_id, expiresAt: new Date(r.expires_at), usedAt: r.used_at ? new Date(r.used_at) : null } : undefined
}

/** Closes every open link of the user (the one just used among them). */
export async function closeOpenResets(db: Knex, userId: number, at: Date): Promise<number> {
  return db('password_resets').where('user_id', userId).whereNull('used_at').update({ used_at: at })
}
