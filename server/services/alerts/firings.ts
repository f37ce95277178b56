// What the rules raised: read by every staff role, acknowledged once, discussed in comments.
import type { Knex } from 'knex'
import type { AlertCount, AlertFiringDto, AlertPage, AlertState } from '../../../shared/types/alert'
import type { AlertKind } from '../../../shared/utils/alert-kinds'
import { writeAudit } from '../../database/repositories/audit'
import { countFirings, findFiring, insertComment, listFirings, lockFiring, markAcknowledged } from '../../database/repositories/alert-firings'
import { findProductByPartNumber } from '../../database/repositories/products'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

export type AlertQuery = { state: AlertState; mine: boolean; kind?: AlertKind; partNumber?: string; stationId?: number; cursor?: string; limit: number }

/** The cursor names the last firing of a page: its raise time in ms and its id. */
export function encodeCursor(f: { raisedAt: string; id: number }): string {
  return `${Date.parse(f.raisedAt)}-${f.id}`
}
export function decodeCursor(c: string): { raisedAt: Date; id: number } | undefined {
  const m = /^(\d{1,15})-(\d{1,15})$/.exec(c)
  return m ? { raisedAt: new Date(Number(m[1])), id: Number(m[2]) } : undefined
}

export async function alertPage(db: Knex, userId: number, q: AlertQuery): Promise<AlertPage> {
  let productId: number | undefined
  if (q.partNumber) {
    const p = await findProductByPartNumber(db, q.partNumber)
    if (!p) return { alerts: [], next: null }
    productId = p.id
  }
  const before = q.cursor ? decodeCursor(q.cursor) : undefined
  if (q.cursor && !before) throw new RuleError(400, 'The cursor is not one this list gave out.', [{ pointer: '/cursor', message: 'unreadable' }])
  // one more than asked tells whether a next page exists
  const rows = await listFirings(db, { state: q.state, mineOf: q.mine ? userId : undefined, kind: q.kind, productId, stationId: q.stationId, before, limit: q.limit + 1 })
  const alerts = rows.slice(0, q.limit)
  return { alerts, next: rows.length > q.limit ? encodeCursor(alerts[alerts.length - 1]!) : null }
}

export async function alertCount(db: Knex, userId: number): Promise<AlertCount> {
  const [open, mine] = await Promise.all([countFirings(db, { state: 'open' }), countFirings(db, { state: 'open', mineOf: userId })])
  return { open, mine }
}

/** Acknowledges an open firing, with the optional comment, in one transaction with its audit row. */
export async function acknowledgeAlert(db: Knex, userId: number, id: number, comment?: string): Promise<AlertFiringDto> {
  return writeTransaction(db, async (trx) => {
    const firing = await lockFiring(trx, id)
    if (!firing) throw new RuleError(404, 'No such alert.')
    if (firing.acknowledgedAt) throw new RuleError(409, `This alert was already acknowledged at ${new Date(firing.acknowledgedAt).toISOString()}.`)
    await markAcknowledged(trx, id, userId)
    const text = comment?.trim()
    const commentId = text ? await insertComment(trx, id, userId, text) : null
    await writeAudit(trx, { userId, action: 'acknowledge', entity: 'alert_firing', entityId: id, after: { commentId, comment: text ?? null } })
    return (await findFiring(trx, id))!
  })
}

export async function commentOnAlert(db: Knex, userId: number, id: number, body: string): Promise<AlertFiringDto> {
  return writeTransaction(db, async (trx) => {
    if (!await lockFiring(trx, id)) throw new RuleError(404, 'No such alert.')
    const commentId = await insertComment(trx, id, userId, body.trim())
    await writeAudit(trx, { userId, action: 'comment', entity: 'alert_firing', entityId: id, after: { commentId, body: body.trim() } })
    return (await findFiring(trx, id))!
  })
}
