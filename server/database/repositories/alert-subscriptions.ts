import type { Knex } from 'knex'
import type { AlertSubscriptionDto, AlertSubscriptionTarget } from '../../../shared/types/alert'

/** A user's subscriptions, each with a label naming what it follows. */
export async function subscriptionsOf(db: Knex, userId: number, id?: number): Promise<AlertSubscriptionDto[]> {
  const q = db('alert_subscriptions as s')
    .leftJoin('alert_rules as r', (j) => j.on('r.id', 's.target_id').andOnVal('s.target', '=', 'rule'))
    .leftJoin('products as p', (j) => j.on('p.id', 's.target_id').andOnVal('s.target', '=', 'product'))
    .leftJoin('stations as st', (j) => j.on('st.id', 's.target_id').andOnVal('s.target', '=', 'station'))
    .where('s.user_id', userId)
    .orderBy('s.target').orderBy('s.id')
    .select('s.id', 's.target', 's.target_id', 's.created_at', 'r.name as rule_name', 'p.part_number', 'p.name as product_name', 'st.name as station_name')
  if (id !== undefined) q.where('s.id', id)
  return (await q).map((r: any) => ({
    id: r.id, target: r.target, targetId: r.target_id, createdAt: new Date(r.created_at).toISOString(),
    label: r.target === 'rule' ? (r.rule_name ?? 'removed rule') : r.target === 'product' ? `${r.part_number} · ${r.product_name}` : (r.station_name ?? 'removed station'),
  }))
}

export async function targetExists(db: Knex, target: AlertSubscriptionTarget, id: number): Promise<boolean> {
  const table = { rule: 'alert_rules', product: 'products', station: 'stations' }[target]
  return !!(await db(table).where({ id }).first('id'))
}

export async function findSubscription(db: Knex, userId: number, target: AlertSubscriptionTarget, targetId: number): Promise<number | undefined> {
  const r = await db('alert_subscriptions').where({ user_id: userId, target, target_id: targetId }).first('id')
  return r?.id
}

export async function insertSubscription(db: Knex, userId: number, target: AlertSubscriptionTarget, targetId: number): Promise<number> {
  const [id] = await db('alert_subscriptions').insert({ user_id: userId, target, target_id: targetId })
  return id!
}

/** Removes one of the user's own subscriptions; answers whether there was one. */
export async function deleteSubscription(db: Knex, userId: number, id: number): Promise<boolean> {
  return (await db('alert_subscriptions').where({ id, user_id: userId }).delete()) > 0
}
