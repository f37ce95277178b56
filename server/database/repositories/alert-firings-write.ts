// A firing and who hears of it: written in one transaction by the evaluator.
import type { Knex } from 'knex'
import type { AlertFigure } from '../../../shared/types/alert'

export type NewFiring = {
  ruleId: number; subject: string; subjectLabel: string; productId: number | null; lotId: number | null; stationId: number | null
  instrumentId: number | null; summary: string; figures: AlertFigure[]; link: string; raisedAt: Date
}
export type Recipient = { userId: number; email: string; name: string }

/** Locks the rule's row for the transaction, so two evaluators never raise the same firing twice; false if it is gone or disabled. */
export async function lockEnabledRule(trx: Knex.Transaction, ruleId: number): Promise<boolean> {
  const r = await trx('alert_rules').where({ id: ruleId }).forUpdate().first('enabled')
  return !!r?.enabled
}

export async function insertFiring(trx: Knex.Transaction, f: NewFiring): Promise<number> {
  const [id] = await trx('alert_firings').insert({
    rule_id: f.ruleId, subject: f.subject.slice(0, 160), subject_label: f.subjectLabel.slice(0, 200), product_id: f.productId, lot_id: f.lotId,
    station_id: f.stationId, instrument_id: f.instrumentId, summary: f.summary.slice(0, 500), figures: JSON.stringify(f.figures), link: f.link.slice(0, 500),
    raised_at: f.raisedAt,
  })
  return Number(id)
}

/** Active users subscribed to the rule, its product or the firing's station, each once. */
export async function subscribers(trx: Knex.Transaction, q: { ruleId: number; productId: number | null; stationId: number | null }): Promise<Recipient[]> {
  const rows = await trx('alert_subscriptions as s').join('users as u', 'u.id', 's.user_id').where('u.disabled', false)
    .where((w) => {
      w.where({ 's.target': 'rule', 's.target_id': q.ruleId })
      if (q.productId !== null) w.orWhere({ 's.target': 'product', 's.target_id': q.productId })
      if (q.stationId !== null) w.orWhere({ 's.target': 'station', 's.target_id': q.stationId })
    })
    .distinct('u.id', 'u.email', 'u.name').orderBy('u.id')
  return rows.map((r: any) => ({ userId: r.id, email: r.email, name: r.name }))
}

/** The station's owner when active. */
export async function stationOwner(trx: Knex.Transaction, stationId: number): Promise<Recipient | null> {
  const r = await trx('stations as s').join('users as u', 'u.id', 's.owner_user_id').where('s.id', stationId).where('u.disabled', false).first('u.id', 'u.email', 'u.name')
  return r ? { userId: r.id, email: r.email, name: r.name } : null
}
