import type { Knex } from 'knex'
import { DEMO_CUSTOMERS, DEMO_LOTS, DEMO_PASSWORD, DEMO_PRODUCTS, DEMO_STAFF, DEMO_STATIONS } from '../../../fixtures/demo-catalogue'
import { hashPasswordOffline } from '../../utils/password-hash'
import { generateStationToken } from '../../utils/station-token'
import { writeAudit } from '../repositories/audit'

export type SeedResult = { stationTokens: Record<string, string> }

const DAY = 86_400_000

/** Fills an empty database with the invented demo company; returns the station tokens (shown once). */
export async function seedDemoCatalogue(db: Knex, now = new Date()): Promise<SeedResult> {
  const passwordHash = await hashPasswordOffline(DEMO_PASSWORD)
  const stationTokens: Record<string, string> = {}
  await db.transaction(async (trx) => {
    const customerIds: Record<string, number> = {}
    for (const c of DEMO_CUSTOMERS) {
      const [id] = await trx('customers').insert({ code: c.code, name: c.name })
      customerIds[c.code] = id!
      await trx('customer_contacts').insert({ customer_id: id, name: c.buyer.name, email: c.buyer.email, function: 'Purchasing', receives_certificates: true })
      await trx('users').insert({ email: c.buyer.email, name: c.buyer.name, role: 'customer', customer_id: id, password_hash: passwordHash })
    }
    const userIds: Record<string, number> = {}
    for (const u of DEMO_STAFF) {
      const [id] = await trx('users').insert({ email: u.email, name: u.name, role: u.role, password_hash: passwordHash })
      userIds[u.role] = id!
    }
    const effective = new Date(now.getTime() - 60 * DAY)
    for (const p of DEMO_PRODUCTS) {
      const [productId] = await trx('products').insert({
        part_number: p.partNumber, name: p.name, multiplier: p.multiplier, input_hz: p.inputHz, output_hz: p.inputHz * p.multiplier,
        steps: JSON.stringify(p.steps), jitter_band_lo_hz: p.jitterBand[0], jitter_band_hi_hz: p.jitterBand[1],
      })
      const [revisionId] = await trx('spec_revisions').insert({
        product_id: productId, revision: 1, status: 'approved', effective_at: effective,
        author_id: userIds.engineer, approved_by: userIds.quality, approved_at: effective, note: 'Initial production limits',
      })
      await writeAudit(trx, { userId: userIds.quality, action: 'approve', entity: 'spec_revision', entityId: revisionId!, after: { partNumber: p.partNumber, revision: 1, status: 'approved', effectiveAt: effective } })
      await trx('spec_limits').insert(p.limits.map((l) => ({
        revision_id: revisionId, step: l.step, name: l.name, qualifier: l.qualifier ?? 0, lsl: l.lsl ?? null, usl: l.usl ?? null,
        target: l.target ?? null, unit: l.unit, required: l.required ?? true, rule: l.rule ?? 'simple',
        default_uncertainty: l.defaultUncertainty ?? null, key_characteristic: l.key ?? false,
      })))
    }
    for (const s of DEMO_STATIONS) {
      const [stationId] = await trx('stations').insert({ name: s.name, location: s.location, description: `Final test for ${s.partNumber}` })
      const t = generateStationToken()
      await trx('station_tokens').insert({ station_id: stationId, token_hash: t.hash, hint: t.hint, created_by: userIds.admin })
      stationTokens[s.name] = t.token
      await writeAudit(trx, { userId: userIds.admin, action: 'create', entity: 'station', entityId: stationId!, after: { name: s.name, activeTokenHints: [t.hint] } })
      const lapsing = s.name === 'ATE-T3-02'
      await trx('instruments').insert([
        { station_id: stationId, kind: 'Signal source analyser', model: 'PNA-40 bench analyser', serial: `SA-${stationId}0417`, calibration_due: new Date(now.getTime() + 140 * DAY) },
        { station_id: stationId, kind: 'Power sensor', model: 'PS-18 thermal sensor', serial: `PS-${stationId}2231`, calibration_due: new Date(now.getTime() + (lapsing ? -3 : 90) * DAY) },
        { station_id: stationId, kind: 'Frequency counter', model: 'FC-3 counter', serial: `FC-${stationId}0090`, calibration_due: new Date(now.getTime() + 200 * DAY) },
      ])
    }
    for (const l of DEMO_LOTS) {
      const product = await trx('products').where({ part_number: l.partNumber }).first('id')
      await trx('lots').insert({ product_id: product.id, code: l.code, planned_qty: l.planned, created_at: new Date(now.getTime() - 20 * DAY) })
    }
  })
  return { stationTokens }
}
