// The demo's alert rules, station owners and one engineer's subscriptions: one rule of each kind on the tripler
// and its stations, with thresholds a quality engineer might set, so the evaluator raises a handful of firings on
// the demo's history (the drifting lot T3-2612-B, the X8 power supply past due), not dozens.
import type { Knex } from 'knex'
import { controlRulesMask } from '../../../shared/utils/alert-kinds'

export async function seedDemoAlerts(db: Knex): Promise<void> {
  const user = async (email: string) => (await db('users').where({ email }).first('id')).id as number
  const station = async (name: string) => (await db('stations').where({ name }).first('id')).id as number
  const engineer = await user('engineer@tercet.test')
  const quality = await user('quality@tercet.test')
  const operator = await user('operator@tercet.test')
  const tripler = (await db('products').where({ part_number: 'VFW-T3-375' }).first('id')).id as number
  const x8Station = await station('ATE-X8-01')
  await db.transaction(async (trx) => {
    for (const name of ['ATE-D2-01', 'ATE-T3-01', 'ATE-T3-02']) await trx('stations').where({ name }).whereNull('owner_user_id').update({ owner_user_id: engineer })
    await trx('stations').where({ id: x8Station }).whereNull('owner_user_id').update({ owner_user_id: operator })
    const power = { product_id: tripler, step: 'final', parameter: 'output_power', qualifier: 0 }
    const rules = [
      { name: 'Tripler final yield', kind: 'yield_low', product_id: tripler, step: 'final', threshold: 85, window_units: 40 },
      { name: 'Tripler output power capability', kind: 'cpk_low', ...power, threshold: 1.0, window_units: 50 },
      { name: 'Tripler output power out of control', kind: 'control_rule', ...power, window_units: 40, control_rules: controlRulesMask([1, 2]) },
      { name: 'Tripler output power heading for a limit', kind: 'drift_toward_limit', ...power, window_units: 30, horizon_units: 40 },
      { name: 'Tripler stations disagree on output power', kind: 'station_bias', ...power, threshold: 0.5, window_units: 60 },
      { name: 'Instrument calibration falling due', kind: 'calibration_due' },
      { name: 'X8 line quiet', kind: 'station_silent', station_id: x8Station, silent_minutes: 480 },
    ]
    const ids: number[] = []
    for (const r of rules) {
      const [id] = await trx('alert_rules').insert({ ...r, enabled: true, created_by: quality, updated_by: quality })
      ids.push(id!)
    }
    await trx('alert_subscriptions').insert([
      { user_id: engineer, target: 'product', target_id: tripler },
      { user_id: quality, target: 'rule', target_id: ids[0] },
    ])
  })
}
