import type { Knex } from 'knex'

export type AuditEntry = {
  userId?: number | null
  stationId?: number | null
  action: string
  entity: string
  entityId: string | number
  before?: unknown
  after?: unknown
}

/** Written inside the caller's transaction so the audit row commits or rolls back with the change. */
export async function writeAudit(trx: Knex, e: AuditEntry): Promise<void> {
  await trx('audit_log').insert({
    user_id: e.userId ?? null,
    station_id: e.stationId ?? null,
    action: e.action,
    entity: e.entity,
    entity_id: String(e.entityId),
    before: e.before === undefined ? null : JSON.stringify(e.before),
    after: e.after === undefined ? null : JSON.stringify(e.after),
  })
}
