import type { Knex } from 'knex'
import type { Role } from '../../../shared/utils/roles'
import { causalQuery } from '../causal-read'

export type UserRecord = {
  id: number
  email: string
  name: string
  role: Role
  customerId: number | null
  customerName: string | null
  disabled: boolean
  lastSignInAt: Date | null
  createdAt: Date
  /** Sealed into each session at sign-in; a session sealed with another value is ended (see server/utils/session.ts). */
  sessionVersion: number
}

const COLUMNS = ['u.id', 'u.email', 'u.name', 'u.role', 'u.customer_id', 'c.name as customer_name', 'u.disabled', 'u.last_sign_in_at', 'u.created_at', 'u.session_version']

function toUser(r: any): UserRecord {
  return {
    id: r.id, email: r.email, name: r.name, role: r.role, customerId: r.customer_id ?? null,
    customerName: r.customer_name ?? null, disabled: !!r.disabled, lastSignInAt: r.last_sign_in_at ?? null, createdAt: r.created_at,
    sessionVersion: Number(r.session_version ?? 0),
  }
}

function base(db: Knex) {
  return db('users as u').leftJoin('customers as c', 'c.id', 'u.customer_id').select(COLUMNS)
}

export async function listUsers(db: Knex): Promise<UserRecord[]> {
  return (await base(db).orderBy('u.role').orderBy('u.email')).map(toUser)
}

export async function findUserById(db: Knex, id: number): Promise<UserRecord | undefined> {
  const r = await base(db).where('u.id', id).first()
  return r ? toUser(r) : undefined
}

/** The user behind a session, as a causal read on a cluster: disabling or a new session version holds at once everywhere. */
export async function findSessionUser(db: Knex, id: number): Promise<UserRecord | undefined> {
  const [r] = await causalQuery(db, base(db).where('u.id', id).limit(1))
  return r ? toUser(r) : undefined
}

/** Includes the password hash: only for sign-in. */
export async function findUserForSignIn(db: Knex, email: string): Promise<(UserRecord & { passwordHash: string }) | undefined> {
  const r = await base(db).select('u.password_hash').where('u.email', email.toLowerCase()).first()
  return r ? { ...toUser(r), passwordHash: r.password_hash } : undefined
}

export async function insertUser(db: Knex, u: { email: string; name: string; role: Role; customerId: number | null; passwordHash: string }): Promise<number> {
  const [id] = await db('users').insert({
    email: u.email.toLowerCase(), name: u.name, role: u.role, customer_id: u.customerId, password_hash: u.passwordHash,
  })
  return id!
}

/**
 * `endSessions` raises the session version, which ends every session of the user signed in before (the caller
 * seals the new version into the cookie of a session that should live on).
 */
export async function updateUser(db: Knex, id: number, patch: Partial<{ name: string; role: Role; customerId: number | null; disabled: boolean; passwordHash: string; endSessions: boolean }>): Promise<void> {
  const row: Record<string, unknown> = { updated_at: db.fn.now(3) }
  if (patch.endSessions) row.session_version = db.raw('session_version + 1')
  if (patch.name !== undefined) row.name = patch.name
  if (patch.role !== undefined) row.role = patch.role
  if (patch.customerId !== undefined) row.customer_id = patch.customerId
  if (patch.disabled !== undefined) row.disabled = patch.disabled
  if (patch.passwordHash !== undefined) row.password_hash = patch.passwordHash
  await db('users').where({ id }).update(row)
}

export async function readSessionVersion(db: Knex, id: number): Promise<number> {
  const r = await db('users').where({ id }).first('session_version')
  return Number(r?.session_version ?? 0)
}

export async function touchSignIn(db: Knex, id: number): Promise<void> {
  await db('users').where({ id }).update({ last_sign_in_at: db.fn.now(3) })
}

export async function countUsers(db: Knex): Promise<number> {
  const r = await db('users').count<{ n: number }[]>({ n: '*' })
  return Number(r[0]!.n)
}

/** Enabled quality users, who may be named to review a draft. */
export async function listQualityReviewers(db: Knex): Promise<{ id: number; name: string }[]> {
  return db('users').where({ role: 'quality', disabled: false }).orderBy('name').select('id', 'name')
}
