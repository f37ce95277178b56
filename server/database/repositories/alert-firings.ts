import type { Knex } from 'knex'
import type { AlertCommentDto, AlertFigure, AlertFiringDto, AlertState } from '../../../shared/types/alert'
import type { AlertKind } from '../../../shared/utils/alert-kinds'

export type FiringFilter = {
  state: AlertState
  /** only firings concerning this user: of rules, products or stations they follow, or of stations they own */
  mineOf?: number
  kind?: AlertKind
  productId?: number
  stationId?: number
  /** keyset: firings strictly older than this (raised_at, id) */
  before?: { raisedAt: Date; id: number }
  limit: number
}

/** A firing concerns a user who follows its rule, its product or its station, or who owns its station. */
function concerning(db: Knex, userId: number) {
  const followed = (target: string) => db('alert_subscriptions').select('target_id').where({ user_id: userId, target })
  return (q: Knex.QueryBuilder) => q
    .whereIn('f.rule_id', followed('rule'))
    .orWhereIn(db.raw('COALESCE(f.product_id, r.product_id)') as any, followed('product'))
    .orWhereIn(db.raw('COALESCE(f.station_id, r.station_id)') as any, followed('station'))
    .orWhereIn(db.raw('COALESCE(f.station_id, r.station_id)') as any, db('stations').select('id').where('owner_user_id', userId))
}

function filtered(db: Knex, f: Omit<FiringFilter, 'before' | 'limit'>) {
  const q = db('alert_firings as f').join('alert_rules as r', 'r.id', 'f.rule_id')
  if (f.state === 'open') q.whereNull('f.acknowledged_at')
  if (f.state === 'acknowledged') q.whereNotNull('f.acknowledged_at')
  if (f.mineOf !== undefined) q.where(concerning(db, f.mineOf))
  if (f.kind) q.where('r.kind', f.kind)
  if (f.productId !== undefined) q.whereRaw('COALESCE(f.product_id, r.product_id) = ?', [f.productId])
  if (f.stationId !== undefined) q.whereRaw('COALESCE(f.station_id, r.station_id) = ?', [f.stationId])
  return q
}

function figuresOf(v: unknown): AlertFigure[] {
  const parsed = typeof v === 'string' ? JSON.parse(v) : v
  return Array.isArray(parsed) ? parsed : []
}

function toFiring(r: any, comments: AlertCommentDto[]): AlertFiringDto {
  return {
    id: Number(r.id), ruleId: r.rule_id, ruleName: r.rule_name, kind: r.kind, subject: r.subject, subjectLabel: r.subject_label,
    summary: r.summary, figures: figuresOf(r.figures), link: r.link, raisedAt: new Date(r.raised_at).toISOString(),
    acknowledgedAt: r.acknowledged_at ? new Date(r.acknowledged_at).toISOString() : null, acknowledgedBy: r.acknowledged_by_name ?? null,
    comments,
  }
}

const firingColumns = ['f.*', 'r.name as rule_name', 'r.kind', 'a.name as acknowledged_by_name']

export async function listFirings(db: Knex, f: FiringFilter): Promise<AlertFiringDto[]> {
  const q = filtered(db, f).leftJoin('users as a', 'a.id', 'f.acknowledged_by').select(firingColumns)
    .orderBy('f.raised_at', 'desc').orderBy('f.id', 'desc').limit(f.limit)
  if (f.before) {
    const { raisedAt, id } = f.before
    q.where((w) => w.where('f.raised_at', '<', raisedAt).orWhere((e) => e.where('f.raised_at', '=', raisedAt).andWhere('f.id', '<', id)))
  }
  const rows = await q
  const comments = await commentsOf(db, rows.map((r: any) => Number(r.id)))
  return rows.map((r: any) => toFiring(r, comments.get(Number(r.id)) ?? []))
}

export async function findFiring(db: Knex, id: number): Promise<AlertFiringDto | undefined> {
  const r = await db('alert_firings as f').join('alert_rules as r', 'r.id', 'f.rule_id').leftJoin('users as a', 'a.id', 'f.acknowledged_by')
    .where('f.id', id).first(firingColumns)
  return r ? toFiring(r, (await commentsOf(db, [id])).get(id) ?? []) : undefined
}

export async function countFirings(db: Knex, f: Omit<FiringFilter, 'before' | 'limit'>): Promise<number> {
  const r = await filtered(db, f).count<{ n: number }[]>({ n: '*' })
  return Number(r[0]?.n ?? 0)
}

/** The firing's acknowledgement, locked for the caller's transaction. */
export async function lockFiring(trx: Knex, id: number): Promise<{ id: number; acknowledgedAt: Date | null } | undefined> {
  const r = await trx('alert_firings').where({ id }).forUpdate().first('id', 'acknowledged_at')
  return r ? { id: Number(r.id), acknowledgedAt: r.acknowledged_at ?? null } : undefined
}

export async function markAcknowledged(trx: Knex, id: number, userId: number): Promise<void> {
  await trx('alert_firings').where({ id }).update({ acknowledged_at: trx.fn.now(3), acknowledged_by: userId })
}

export async function insertComment(trx: Knex, firingId: number, userId: number, body: string): Promise<number> {
  const [id] = await trx('alert_comments').insert({ firing_id: firingId, user_id: userId, body })
  return Number(id)
}

/** Comments of the given firings, oldest first within each. */
export async function commentsOf(db: Knex, firingIds: number[]): Promise<Map<number, AlertCommentDto[]>> {
  const out = new Map<number, AlertCommentDto[]>()
  if (!firingIds.length) return out
  const rows = await db('alert_comments as c').join('users as u', 'u.id', 'c.user_id').whereIn('c.firing_id', firingIds)
    .orderBy('c.created_at').orderBy('c.id').select('c.id', 'c.firing_id', 'c.body', 'c.created_at', 'u.name as author')
  for (const r of rows) {
    const list = out.get(Number(r.firing_id)) ?? []
    list.push({ id: Number(r.id), body: r.body, author: r.author, createdAt: new Date(r.created_at).toISOString() })
    out.set(Number(r.firing_id), list)
  }
  return out
}
