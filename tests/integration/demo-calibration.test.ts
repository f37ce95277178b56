import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { unitStepsOfLot } from '../../server/database/repositories/lot-detail'
import { lotReadiness } from '../../server/services/lot-readiness'
import { DEMO_CALIBRATION_FINDING, DEMO_INSTRUMENTS, DEMO_STATIONS } from '../../fixtures/demo-catalogue'
import { noticePlan } from '../../server/services/calibration/impact-notice-plan'
import { findImpact, lotsOfWindow } from '../../server/database/repositories/calibration-impacts'

// The seeded test database holds the demo scenario; these checks hold it to the product's own rules.
let db: Knex

beforeAll(() => { db = createKnex(connectionFromEnv(), { min: 0, max: 2 }) })
afterAll(async () => { await db?.destroy() })

const lotId = async (code: string) => (await db('lots').where({ code }).first('id')).id as number

describe('the demo scenario against its own calibration rules', () => {
  it('the released tripler lot passes its own release check', async () => {
    const lot = await db('lots as l').join('products as p', 'p.id', 'l.product_id').where('l.code', 'T3-2611-A').first('l.id', 'l.status', 'p.steps')
    expect(lot.status).toBe('released')
    const steps = typeof lot.steps === 'string' ? JSON.parse(lot.steps) : lot.steps
    const readiness = lotReadiness(await unitStepsOfLot(db, lot.id), steps)
    expect(readiness.units).toBe(72)
    expect(readiness.notReady).toEqual([])
  })

  it('every run of that lot was judged against the three instruments its station held, each with a record in force', async () => {
    const [rows] = await db.raw(`SELECT r.id, COUNT(ri.instrument_id) AS n, SUM(ri.calibration_id IS NULL) AS missing, SUM(r.started_at >= c.due_at) AS past
      FROM test_runs r LEFT JOIN run_instruments ri ON ri.run_id = r.id LEFT JOIN calibration_records c ON c.id = ri.calibration_id
      WHERE r.lot_id = ? GROUP BY r.id`, [await lotId('T3-2611-A')])
    expect(rows.length).toBeGreaterThan(200)
    expect(rows.every((r: any) => Number(r.n) === 3 && Number(r.missing) === 0 && Number(r.past) === 0)).toBe(true)
  })

  it('the open ×8 lot shows the flag: exactly its runs from the lapsed sensor\'s due date on', async () => {
    const due = (await db('calibration_records as c').join('instruments as i', 'i.id', 'c.instrument_id').where('i.asset_number', 'VFW-PS-2262').first('c.due_at')).due_at as Date
    const runs = await db('test_runs').where({ lot_id: await lotId('X8-2611-A') }).select('started_at', 'calibration_lapsed')
    const flagged = runs.filter((r: any) => r.calibration_lapsed)
    expect(flagged.length).toBeGreaterThan(0)
    expect(runs.every((r: any) => !!r.calibration_lapsed === (new Date(r.started_at).getTime() >= due.getTime()))).toBe(true)
    expect((await db('lots').where({ code: 'X8-2611-A' }).first('status')).status).toBe('open')
  })

  it('holds one instrument per demo entry, with the holdings and records the catalogue gives, superseded records kept', async () => {
    const assets = (await db('instruments').whereIn('asset_number', DEMO_INSTRUMENTS.map((i) => i.asset)).select('asset_number')).map((r: any) => r.asset_number)
    expect(assets.sort()).toEqual(DEMO_INSTRUMENTS.map((i) => i.asset).sort())
    const superseded = await db('calibration_records').whereNotNull('superseded_from').select('certificate_number', 'superseded_reason')
    expect(superseded.map((r: any) => r.certificate_number)).toEqual(expect.arrayContaining(['BML-25-1140', 'CCS-2025-2987']))
    expect(superseded.every((r: any) => r.superseded_reason.length > 10)).toBe(true)
    const pdf = await db('calibration_certificates as f').join('calibration_records as c', 'c.id', 'f.record_id').where('c.certificate_number', 'BML-25-1140-R1').first('f.pdf')
    expect(Buffer.from(pdf.pdf).subarray(0, 5).toString('latin1')).toBe('%PDF-')
    expect(DEMO_STATIONS.every((s) => DEMO_INSTRUMENTS.some((i) => i.holdings.some((h) => h.station === s.name && h.untilDaysAgo === undefined)))).toBe(true)
  })

  it('has an open impact review for the analyser found out of tolerance, holding the shipped doubler lot and Saltmarsh\'s certificates', async () => {
    const row = await db('calibration_impacts as i').join('calibration_records as c', 'c.id', 'i.record_id')
      .where('c.certificate_number', DEMO_CALIBRATION_FINDING.certificate).first('i.id', 'i.status')
    expect(row.status).toBe('open')
    const impact = (await findImpact(db, row.id))!
    const lots = await lotsOfWindow(db, { instrumentId: impact.instrumentId, from: impact.from, to: impact.to }, impact.id)
    expect(lots.find((l) => l.code === 'D2-2611-A')?.units).toBe(48)
    const plan = await noticePlan(db, impact)
    expect(plan.map((p) => p.customer.code)).toContain('SALT')
    expect(plan.find((p) => p.customer.code === 'SALT')!.units.length).toBeGreaterThan(0)
  })
})
