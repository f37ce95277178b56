import type { Knex } from 'knex'
import type { AlertRuleDto, AlertRuleView } from '../../../shared/types/alert'
import { controlRulesFromMask, type AlertKind } from '../../../shared/utils/alert-kinds'

/** A rule's stored columns, as the service writes them. */
export type AlertRuleRow = {
  name: string
  kind: AlertKind
  product_id: number | null
  station_id: number | null
  step: string | null
  parameter: string | null
  qualifier: number | null
  threshold: number | null
  window_units: number | null
  horizon_units: number | null
  silent_minutes: number | null
  control_rules: number | null
  enabled: boolean
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v))

function toDto(r: any): AlertRuleDto {
  return {
    id: r.id, name: r.name, kind: r.kind, enabled: !!r.enabled,
    productId: num(r.product_id), partNumber: r.part_number ?? null,
    stationId: num(r.station_id), stationCode: r.station_name ?? null,
    step: r.step ?? null, parameter: r.parameter ?? null, qualifier: num(r.qualifier),
    threshold: num(r.threshold), windowUnits: num(r.window_units), horizonUnits: num(r.horizon_units),
    silentMinutes: num(r.silent_minutes), controlRules: controlRulesFromMask(r.control_rules),
    updatedAt: new Date(r.updated_at).toISOString(), updatedBy: r.updated_by_name ?? null,
  }
}

function ruleQuery(db: Knex) {
  return db('alert_rules as r')
    .leftJoin('products as p', 'p.id', 'r.product_id')
    .leftJoin('stations as s', 's.id', 'r.station_id')
    .leftJoin('users as u', 'u.id', 'r.updated_by')
    .select('r.*', 'p.part_number', 's.name as station_name', 'u.name as updated_by_name')
}

export async function listRules(db: Knex, filter: { productId?: number; kind?: AlertKind } = {}): Promise<AlertRuleView[]> {
  const q = ruleQuery(db)
    .select(db.raw('(SELECT COUNT(*) FROM alert_firings f WHERE f.rule_id = r.id) AS firings'))
    .orderBy('r.name').orderBy('r.id')
  if (filter.productId !== undefined) q.where('r.product_id', filter.productId)
  if (filter.kind) q.where('r.kind', filter.kind)
  return (await q).map((r: any) => ({ ...toDto(r), firings: Number(r.firings) }))
}

export async function findRule(db: Knex, id: number): Promise<AlertRuleDto | undefined> {
  const r = await ruleQuery(db).where('r.id', id).first()
  return r ? toDto(r) : undefined
}

/** The stored columns of a rule, locked for a change. */
export async function lockRuleRow(trx: Knex, id: number): Promise<(AlertRuleRow & { id: number }) | undefined> {
  const r = await trx('alert_rules').where({ id }).forUpdate().first()
  return r ? { ...r, enabled: !!r.enabled } : undefined
}

export async function insertRule(trx: Knex, row: AlertRuleRow, userId: number): Promise<number> {
  const [id] = await trx('alert_rules').insert({ ...row, created_by: userId, updated_by: userId })
  return id!
}

export async function updateRule(trx: Knex, id: number, row: AlertRuleRow, userId: number): Promise<void> {
  await trx('alert_rules').where({ id }).update({ ...row, updated_by: userId, updated_at: trx.fn.now(3) })
}

export async function setRuleEnabled(trx: Knex, id: number, enabled: boolean, userId: number): Promise<void> {
  await trx('alert_rules').where({ id }).update({ enabled, updated_by: userId, updated_at: trx.fn.now(3) })
}

export async function countFiringsOf(trx: Knex, ruleId: number): Promise<number> {
  const r = await trx('alert_firings').where({ rule_id: ruleId }).count<{ n: number }[]>({ n: '*' })
  return Number(r[0]?.n ?? 0)
}

/** Removes a rule that never fired, with everyone's subscriptions to it. */
export async function deleteRule(trx: Knex, id: number): Promise<void> {
  await trx('alert_subscriptions').where({ target: 'rule', target_id: id }).delete()
  await trx('alert_rules').where({ id }).delete()
}

export async function stationChoices(db: Knex): Promise<{ id: number; name: string }[]> {
  return (await db('stations').orderBy('name').select('id', 'name')).map((s: any) => ({ id: s.id, name: s.name }))
}

export async function stationExists(db: Knex, id: number): Promise<boolean> {
  return !!(await db('stations').where({ id }).first('id'))
}
