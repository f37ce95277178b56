import type { Knex } from 'knex'

export type AuditFilter = { entity?: string; entityId?: string; action?: string; userId?: number; from?: Date; to?: Date }

export type AuditRow = {
  id: number; at: Date; user: { id: number; name: string; email: string } | null; station: { id: number; name: string } | null
  action: string; entity: string; entityId: string; before: unknown; after: unknown
}

function parseJson(v: unknown): unknown {
  if (v == null) return null
  if (typeof v !== 'string') return v
  try { return JSON.parse(v) } catch { return v }
}

function filtered(db: Knex, f: AuditFilter) {
  const q = db('audit_log as a')
  if (f.entity) q.where('a.entity', f.entity)
  if (f.entityId) q.where('a.entity_id', f.entityId)
  if (f.action) q.where('a.action', f.action)
  if (f.userId) q.where('a.user_id', f.userId)
  if (f.from) q.where('a.at', '>=', f.from)
  if (f.to) q.where('a.at', '<', f.to)
  return q
}

/** Newest first. Read-only: nothing in the application updates or deletes audit rows. */
export async function listAudit(db: Knex, f: AuditFilter, page: { limit: number; offset: number }): Promise<{ total: number; rows: AuditRow[] }> {
  const [count] = await filtered(db, f).count<{ n: number }[]>({ n: '*' })
  const rows = await filtered(db, f).leftJoin('users as u', 'u.id', 'a.user_id').leftJoin('stations as s', 's.id', 'a.station_id')
    .select('a.*', 'u.name as user_name', 'u.email as user_email', 's.name as station_name')
    .orderBy('a.at', 'desc').orderBy('a.id', 'desc').limit(page.limit).offset(page.offset)
  return {
    total: Number(count!.n),
    rows: rows.map((r: any) => ({
      id: Number(r.id), at: r.at, user: r.user_id ? { id: r.user_id, name: r.user_name ?? '', email: r.user_email ?? '' } : null,
      station: r.station_id ? { id: r.station_id, name: r.station_name ?? '' } : null,
      action: r.action, entity: r.entity, entityId: r.entity_id, before: parseJson(r.before), after: parseJson(r.after),
    })),
  }
}

/** The entity kinds, actions and acting users that occur, for filter menus. */
export async function auditFacets(db: Knex): Promise<{ entities: string[]; actions: string[]; users: { id: number; name: string; email: string }[] }> {
  const [entities, actions, users] = await Promise.all([
    db('audit_log').distinct('entity').orderBy('entity'),
    db('audit_log').distinct('action').orderBy('action'),
    db('users as u').whereIn('u.id', db('audit_log').distinct('user_id').whereNotNull('user_id')).select('u.id', 'u.name', 'u.email').orderBy('u.name'),
  ])
  return { entities: entities.map((r: any) => r.entity), actions: actions.map((r: any) => r.action), users }
}
