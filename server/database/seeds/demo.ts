import type { Knex } from 'knex'
import {
  DEMO_CUSTOMERS, DEMO_INSTRUMENTS, DEMO_LOTS, DEMO_PASSWORD, DEMO_PRODUCTS, DEMO_STAFF, DEMO_STATIONS, DEMO_STATIONS_SINCE_DAYS,
} from '../../../fixtures/demo-catalogue'
import { demoCertificatePdf } from '../../../fixtures/demo-certificate'
import { addCalibration, addInstrument, moveInstrument, supersedeCalibration } from '../../services/calibration/history'
import { hashPasswordOffline } from '../../utils/password-hash'
import { generateStationToken } from '../../utils/station-token'
import { writeAudit } from '../repositories/audit'
import { matchesLotPattern, parseLotPatterns } from '../../../shared/utils/lot-kind'

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
        engineering_lot_pattern: p.engineeringLotPattern ?? null,
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
    const stationsSince = new Date(now.getTime() - DEMO_STATIONS_SINCE_DAYS * DAY)
    for (const s of DEMO_STATIONS) {
      const [stationId] = await trx('stations').insert({ name: s.name, location: s.location, description: `Final test for ${s.partNumber}`, created_at: stationsSince })
      const t = generateStationToken()
      await trx('station_tokens').insert({ station_id: stationId, token_hash: t.hash, hint: t.hint, created_by: userIds.admin })
      stationTokens[s.name] = t.token
      await writeAudit(trx, { userId: userIds.admin, action: 'create', entity: 'station', entityId: stationId!, after: { name: s.name, activeTokenHints: [t.hint] } })
    }
    await seedDemoInstruments(trx, userIds.engineer!, now)
    for (const l of DEMO_LOTS) {
      const product = await trx('products').where({ part_number: l.partNumber }).first('id', 'engineering_lot_pattern')
      // marked as a station's first run would mark it: by the product's pattern
      const engineering = matchesLotPattern(l.code, parseLotPatterns(product.engineering_lot_pattern).patterns)
      await trx('lots').insert({
        product_id: product.id, code: l.code, planned_qty: l.planned, created_at: new Date(now.getTime() - 20 * DAY),
        engineering, engineering_source: engineering ? 'pattern' : null,
      })
    }
  })
  return { stationTokens }
}

/** The demo instruments with their holdings and calibration records, entered as an engineer would enter them. */
async function seedDemoInstruments(trx: Knex.Transaction, engineerId: number, now: Date): Promise<void> {
  const ago = (days: number) => new Date(now.getTime() - days * DAY)
  const stationIds = new Map((await trx('stations').select('id', 'name')).map((r: any) => [r.name as string, r.id as number]))
  for (const i of DEMO_INSTRUMENTS) {
    const [first, ...later] = i.holdings
    const { id } = await addInstrument(trx, engineerId, {
      assetNumber: i.asset, kind: i.kind, model: i.model, serial: i.serial,
      ...(first ? { stationId: stationIds.get(first.station)!, installedAt: ago(first.fromDaysAgo).toISOString() } : {}),
    }, now)
    let previous = first
    for (const h of later) {
      if (previous?.untilDaysAgo !== undefined && previous.untilDaysAgo !== h.fromDaysAgo) await moveInstrument(trx, engineerId, id, { stationId: null, at: ago(previous.untilDaysAgo).toISOString() }, now)
      await moveInstrument(trx, engineerId, id, { stationId: stationIds.get(h.station)!, at: ago(h.fromDaysAgo).toISOString() }, now)
      previous = h
    }
    if (previous?.untilDaysAgo !== undefined) await moveInstrument(trx, engineerId, id, { stationId: null, at: ago(previous.untilDaysAgo).toISOString() }, now)
    for (const c of i.calibrations) {
      const calibratedOn = ago(c.calibratedDaysAgo)
      const dueAt = new Date(now.getTime() + c.dueInDays * DAY)
      const pdf = c.withPdf ? await demoCertificatePdf({ ...c, ...i, calibratedOn, dueAt }) : null
      const record = await addCalibration(trx, engineerId, id, {
        certificateNumber: c.certificate, laboratory: c.laboratory, asFound: c.asFound, calibratedOn: calibratedOn.toISOString(), dueAt: dueAt.toISOString(),
        ...(pdf ? { certificatePdf: pdf.toString('base64'), certificateFileName: `${c.certificate}.pdf` } : {}),
      }, now)
      if (c.superseded) await supersedeCalibration(trx, engineerId, record.id, { reason: c.superseded.reason, effectiveFrom: ago(c.superseded.fromDaysAgo).toISOString() }, now)
    }
  }
}
