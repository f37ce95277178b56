// The alert evaluator against the real database: folds mark products, each kind fires on data made to fire it and
// stays quiet on data that should not, one firing per subject within the throttle, one evaluator at a time, and
// the notices arrive exactly once after the mail server was down.
import { randomUUID } from 'node:crypto'
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs'
import net from 'node:net'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startMailFake } from '../../scripts/lib/mail-fake.mjs'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { migrationSource } from '../../server/database/migration-source'
import { takeLease } from '../../server/database/repositories/job-leases'
import { evaluateAlerts } from '../../server/services/alerts/evaluate'
import { addCalibration, addInstrument } from '../../server/services/calibration/history'
import { foldPendingStats } from '../../server/services/ingest/fold-param-stats'
import { ingestRun, type StationRef } from '../../server/services/ingest/ingest-run'
import { sendDueMail, type SenderPolicy } from '../../server/services/mail/sender'
import { setLotKind } from '../../server/services/lot-kind'
import { smtpDeliver } from '../../server/services/mail/transport'
import { validateRun } from '../../server/utils/run-validator'
import { controlRulesMask } from '../../shared/utils/alert-kinds'

const dbName = `${connectionFromEnv().database}_alerts`
const MIN = 60_000
const DAY = 86_400_000
let admin: Knex
let db: Knex
let engineerId = 0
let ownerId = 0
const stations: Record<string, StationRef> = {}

async function newStation(name: string, owner: number | null = null): Promise<StationRef> {
  const [id] = await db('stations').insert({ name, owner_user_id: owner })
  return (stations[name] = { id: id!, name })
}

/** A product with one step, tune, whose output power is judged against 8…12 dBm. */
async function newProduct(part: string): Promise<number> {
  const [id] = await db('products').insert({ part_number: part, name: `Test part ${part}`, multiplier: 2, input_hz: 125e6, output_hz: 250e6, steps: JSON.stringify(['tune']) })
  const effective = new Date(Date.now() - 60 * DAY)
  const [rev] = await db('spec_revisions').insert({ product_id: id, revision: 1, status: 'approved', effective_at: effective, author_id: engineerId, approved_by: engineerId, approved_at: effective })
  await db('spec_limits').insert({ revision_id: rev, step: 'tune', name: 'output_power', qualifier: 0, lsl: 8, usl: 12, target: 10, unit: 'dBm', required: true, rule: 'simple' })
  return id!
}

/** Posts one tune run per value, a minute apart in test order, ending `endMinutesAgo` before now; then folds. */
async function post(part: string, lot: string, values: number[], station: (i: number) => StationRef, endMinutesAgo = 60) {
  const start = Date.now() - (endMinutesAgo + values.length) * MIN
  for (const [i, value] of values.entries()) {
    const t = new Date(start + i * MIN)
    const v = validateRun({
      id: randomUUID(), serial: `${lot}-${i}`, partNumber: part, lot, step: 'tune', startedAt: t.toISOString(), finishedAt: new Date(t.getTime() + 20_000).toISOString(),
      measurements: [{ name: 'output_power', value, unit: 'dBm' }],
    })
    if (!v.ok) throw new Error(JSON.stringify(v.errors))
    await ingestRun(db, station(i), v.value)
  }
  await foldPendingStats(db)
}

async function rule(r: Record<string, unknown>): Promise<number> {
  const [id] = await db('alert_rules').insert({ enabled: true, created_by: engineerId, ...r })
  return id!
}
const json = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
const firings = (ruleId: number) => db('alert_firings').where({ rule_id: ruleId }).orderBy('id')
async function evaluate(o: Parameters<typeof evaluateAlerts>[1] = {}) {
  // a test that names a clock period wants the clock kinds evaluated now, whatever an earlier test's clock said
  if (o.clockMs) await db('job_leases').where({ name: 'alerts-clock' }).update({ last_run_at: null })
  return evaluateAlerts(db, { owner: 'test', throttleS: 3600, ...o })
}

beforeAll(async () => {
  admin = createKnex(connectionFromEnv())
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.raw(`CREATE DATABASE \`${dbName}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`)
  db = createKnex({ ...connectionFromEnv(), database: dbName }, { min: 0, max: 8 })
  await db.migrate.latest({ migrationSource })
  ;[engineerId] = await db('users').insert({ email: 'eng@vellmar.example', name: 'Ines Calloway', role: 'engineer', password_hash: 'x' })
  ;[ownerId] = await db('users').insert({ email: 'owner@vellmar.example', name: 'Bram Oduya', role: 'operator', password_hash: 'x' })
  await db('users').insert({ email: 'gone@vellmar.example', name: 'Former Colleague', role: 'engineer', password_hash: 'x', disabled: true })
  await newStation('ATE-A1', ownerId)
  await newStation('ATE-A2', ownerId)
}, 120_000)
afterAll(async () => {
  await db?.destroy()
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.destroy()
})

describe('marks', () => {
  it('a fold marks the product once for many runs, and an evaluation clears the mark', async () => {
    const productId = await newProduct('ALR-MARK')
    await post('ALR-MARK', 'ALR-MARK-1', [10, 10.1, 9.9, 10.2, 9.8], () => stations['ATE-A1']!)
    const mark = await db('alert_marks').where({ product_id: productId }).first()
    expect(Number(mark.seq)).toBe(1)
    expect(Number((await db('lot_stats_pending').count({ n: '*' }).first())!.n)).toBe(0)
    await evaluate()
    expect(await db('alert_marks').where({ product_id: productId }).first()).toBeUndefined()
  })

  it('a mark raised again while an evaluation ran stays for the next one', async () => {
    const productId = await newProduct('ALR-MARK2')
    await post('ALR-MARK2', 'ALR-MARK2-1', [10, 10.1], () => stations['ATE-A1']!)
    const { clearMark, readMarks } = await import('../../server/database/repositories/alert-reads')
    const [seen] = (await readMarks(db, 100)).filter((m) => m.productId === productId)
    await post('ALR-MARK2', 'ALR-MARK2-1', [10.3], () => stations['ATE-A1']!)
    expect(await clearMark(db, seen!)).toBe(false)
    expect(Number((await db('alert_marks').where({ product_id: productId }).first()).seq)).toBe(2)
    await evaluate()
  })
})

describe('each kind of rule', () => {
  it('first-pass yield: 16 of 20 first attempts pass (80 %): fires below 90 %, quiet at 75 %', async () => {
    const productId = await newProduct('ALR-YLD')
    const fire = await rule({ name: 'Tune yield under 90 %', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 90, window_units: 20 })
    const quiet = await rule({ name: 'Tune yield under 75 %', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 75, window_units: 20 })
    await post('ALR-YLD', 'ALR-YLD-1', Array.from({ length: 20 }, (_, i) => (i % 5 === 2 ? 7.2 : 10)), () => stations['ATE-A1']!)
    await evaluate()
    const [f] = await firings(fire)
    expect(f.subject).toBe(`product:${productId}/tune`)
    expect(f.summary).toContain('80 %')
    expect(f.link).toBe('/lots/ALR-YLD-1')
    expect(await firings(quiet)).toHaveLength(0)
  })

  it('an engineering lot stays out of a rule\'s window: its 4 failures of 20 fire nothing until it is marked a production lot', async () => {
    const productId = await newProduct('ALR-ENG')
    await db('products').where({ id: productId }).update({ engineering_lot_pattern: 'ALR-ENG-T*' })
    const r = await rule({ name: 'Tune yield under 90 %', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 90, window_units: 20 })
    await post('ALR-ENG', 'ALR-ENG-T1', Array.from({ length: 20 }, (_, i) => (i % 5 === 2 ? 7.2 : 10)), () => stations['ATE-A1']!)
    expect((await db('lots').where({ code: 'ALR-ENG-T1' }).first()).engineering).toBeTruthy()
    await evaluate()
    expect(await firings(r)).toHaveLength(0)
    await setLotKind(db, engineerId, 'ALR-ENG-T1', { engineering: false, reason: 'built to the production drawing after all' })
    await post('ALR-ENG', 'ALR-ENG-2', [10], () => stations['ATE-A1']!)
    await evaluate()
    const [f] = await firings(r)
    expect(f.summary).toMatch(/8[01] %/)
  })

  it('Cpk: a repeating spread about 10 against 8…12 (Cpk near 0.9): fires below 1.5, quiet below 0.5', async () => {
    const productId = await newProduct('ALR-CPK')
    const fire = await rule({ name: 'Power Cpk under 1.5', kind: 'cpk_low', product_id: productId, step: 'tune', parameter: 'output_power', threshold: 1.5, window_units: 30 })
    const quiet = await rule({ name: 'Power Cpk under 0.5', kind: 'cpk_low', product_id: productId, step: 'tune', parameter: 'output_power', threshold: 0.5, window_units: 30 })
    await post('ALR-CPK', 'ALR-CPK-1', Array.from({ length: 30 }, (_, i) => 10 + [0.6, -0.5, 0.1, -0.7, 0.4, -0.2][i % 6]!), () => stations['ATE-A1']!)
    await evaluate()
    const [f] = await firings(fire)
    expect(json(f.figures).find((x: any) => x.label === 'Cpk').value).toBeLessThan(1.5)
    expect(f.link).toBe('/trends?part=ALR-CPK&name=output_power&step=tune')
    expect(await firings(quiet)).toHaveLength(0)
  })

  it('control rule: a point far beyond 3σ breaks rule 1; a rule watching only rule 4 stays quiet; the same point never fires twice', async () => {
    const productId = await newProduct('ALR-WE')
    const fire = await rule({ name: 'Power beyond 3σ', kind: 'control_rule', product_id: productId, step: 'tune', parameter: 'output_power', window_units: 25, control_rules: controlRulesMask([1]) })
    const quiet = await rule({ name: 'Power run of eight', kind: 'control_rule', product_id: productId, step: 'tune', parameter: 'output_power', window_units: 25, control_rules: controlRulesMask([4]) })
    const values = [...Array.from({ length: 19 }, (_, i) => (i % 2 ? 9.9 : 10.1)), 11.6]
    await post('ALR-WE', 'ALR-WE-1', values, () => stations['ATE-A1']!)
    await evaluate()
    const [f] = await firings(fire)
    expect(f.summary).toContain('ALR-WE-1-19')
    expect(f.link).toBe('/lots/ALR-WE-1?name=output_power&step=tune')
    expect(await firings(quiet)).toHaveLength(0)
    // two hours on, past the throttle, with one more ordinary value: the old point is not raised again
    await post('ALR-WE', 'ALR-WE-1', [10.0], () => stations['ATE-A1']!, 50)
    await evaluate({ now: new Date(Date.now() + 2 * 3600_000) })
    expect(await firings(fire)).toHaveLength(1)
  })

  it('drift: a rise of 0.1 dBm per unit from 10 reaches 12 within 20 units but not within 5', async () => {
    const productId = await newProduct('ALR-DRF')
    const fire = await rule({ name: 'Power drifting, 20 ahead', kind: 'drift_toward_limit', product_id: productId, step: 'tune', parameter: 'output_power', window_units: 10, horizon_units: 20 })
    const quiet = await rule({ name: 'Power drifting, 5 ahead', kind: 'drift_toward_limit', product_id: productId, step: 'tune', parameter: 'output_power', window_units: 10, horizon_units: 5 })
    await post('ALR-DRF', 'ALR-DRF-1', Array.from({ length: 10 }, (_, i) => 10 + 0.1 * i), () => stations['ATE-A1']!)
    await evaluate()
    const [f] = await firings(fire)
    // hand: the line through 10.0…10.9 is exact, fitted 10.9 now, 12.9 twenty units on, 11 units to 12.0
    const fig = Object.fromEntries(json(f.figures).map((x: any) => [x.label, x.value]))
    expect(fig['Slope']).toBeCloseTo(0.1, 10)
    expect(fig['Projected in 20 units']).toBeCloseTo(12.9, 10)
    expect(fig['Units to crossing']).toBe(11)
    expect(await firings(quiet)).toHaveLength(0)
  })

  it('station bias: one station 0.6 dBm above the other fires for each station above 0.3, quiet at 1', async () => {
    const productId = await newProduct('ALR-BIAS')
    const fire = await rule({ name: 'Stations disagree by 0.3', kind: 'station_bias', product_id: productId, step: 'tune', parameter: 'output_power', threshold: 0.3, window_units: 20 })
    const quiet = await rule({ name: 'Stations disagree by 1', kind: 'station_bias', product_id: productId, step: 'tune', parameter: 'output_power', threshold: 1, window_units: 20 })
    const pick = (i: number) => stations[i % 2 ? 'ATE-A2' : 'ATE-A1']!
    await post('ALR-BIAS', 'ALR-BIAS-1', Array.from({ length: 20 }, (_, i) => (i % 2 ? 10.6 : 10) + (i % 4 < 2 ? 0.05 : -0.05)), pick)
    await evaluate()
    const got = await firings(fire)
    expect(got.map((f: any) => f.station_id).sort()).toEqual([stations['ATE-A1']!.id, stations['ATE-A2']!.id].sort())
    expect(got.every((f: any) => f.subject.includes('/station:'))).toBe(true)
    expect(await firings(quiet)).toHaveLength(0)
  })

  it('calibration due: an instrument due in 10 days fires for its station (and tells the owner); one due in 100 days is quiet', async () => {
    const near = await newStation('ATE-CAL-NEAR', ownerId)
    const far = await newStation('ATE-CAL-FAR', ownerId)
    await db.transaction(async (trx) => {
      for (const [s, days, asset] of [[near, 10, 'VFW-T-NEAR'], [far, 100, 'VFW-T-FAR']] as const) {
        const { id } = await addInstrument(trx, engineerId, { assetNumber: asset, kind: 'Power sensor', model: 'PS-18', serial: asset, stationId: s.id, installedAt: new Date(Date.now() - 50 * DAY).toISOString() })
        await addCalibration(trx, engineerId, id, { certificateNumber: `C-${asset}`, laboratory: 'Invented Lab', asFound: 'in_tolerance', calibratedOn: new Date(Date.now() - 300 * DAY).toISOString(), dueAt: new Date(Date.now() + days * DAY).toISOString() })
      }
    })
    const fire = await rule({ name: 'Calibration near', kind: 'calibration_due', station_id: near.id })
    const quiet = await rule({ name: 'Calibration far', kind: 'calibration_due', station_id: far.id })
    const before = await db('mail_outbox').where({ template: 'calibrationDue' }).count({ n: '*' }).first()
    await evaluate({ clockMs: 1 })
    const [f] = await firings(fire)
    expect(f.subject).toMatch(/^instrument:\d+\/due:\d{4}-\d{2}-\d{2}$/)
    expect(f.link).toBe(`/stations/${near.id}`)
    expect(await firings(quiet)).toHaveLength(0)
    const after = await db('mail_outbox').where({ template: 'calibrationDue' }).count({ n: '*' }).first()
    expect(Number(after!.n) - Number(before!.n)).toBe(1)
    // the due-soon period is the shared setting: at 120 days the far instrument falls due too
    await db('app_settings').where({ name: 'calibration_due_soon_days' }).update({ value: '120' })
    await evaluate({ clockMs: 1, now: new Date(Date.now() + 1000) })
    await db('app_settings').where({ name: 'calibration_due_soon_days' }).update({ value: '30' })
    expect(await firings(quiet)).toHaveLength(1)
    expect(await firings(fire)).toHaveLength(1)
  })

  it('station silent: 90 minutes without a run while its lot is open fires once per silence; 10 minutes is quiet', async () => {
    await newProduct('ALR-SIL')
    const silent = await newStation('ATE-SIL-1', ownerId)
    const busy = await newStation('ATE-SIL-2', ownerId)
    await post('ALR-SIL', 'ALR-SIL-1', [10, 10.1], () => silent, 90)
    await post('ALR-SIL', 'ALR-SIL-2', [10, 10.1], () => busy, 0)
    // what matters is when runs were posted: the silent station's last run came in 90 minutes ago
    await db('test_runs').where({ station_id: silent.id }).update({ received_at: new Date(Date.now() - 90 * MIN) })
    const fire = await rule({ name: 'Silent an hour', kind: 'station_silent', station_id: silent.id, silent_minutes: 60 })
    const quiet = await rule({ name: 'Busy station silent', kind: 'station_silent', station_id: busy.id, silent_minutes: 60 })
    await evaluate({ clockMs: 1 })
    const [f] = await firings(fire)
    expect(f.subject).toMatch(new RegExp(`^station:${silent.id}/after-run:\\d+$`))
    expect(await firings(quiet)).toHaveLength(0)
    // the same silence two hours on: past the throttle, still one firing
    await evaluate({ clockMs: 1, now: new Date(Date.now() + 2 * 3600_000) })
    expect(await firings(fire)).toHaveLength(1)
    // once the lot is closed a silence is not raised at all
    const closed = await rule({ name: 'Silent, lot closed', kind: 'station_silent', station_id: silent.id, silent_minutes: 60 })
    await db('lots').where({ code: 'ALR-SIL-1' }).update({ status: 'released' })
    await evaluate({ clockMs: 1, now: new Date(Date.now() + 3000) })
    expect(await firings(closed)).toHaveLength(0)
  })
})

describe('a rule that cannot be evaluated', () => {
  it('is reported and skipped: the other rules of its product still fire and the mark is cleared', async () => {
    const productId = await newProduct('ALR-BAD')
    const bad = await rule({ name: 'Cpk on broken limits', kind: 'cpk_low', product_id: productId, step: 'tune', parameter: 'output_power', threshold: 1, window_units: 10 })
    const good = await rule({ name: 'Yield beside broken limits', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 99, window_units: 10 })
    await post('ALR-BAD', 'ALR-BAD-1', [10, 7, 10, 10.2, 9.8, 10.1, 9.9, 10, 10.3, 9.7], () => stations['ATE-A1']!)
    // limits the capability arithmetic refuses (USL below LSL), as a hand edit of the database could leave them
    const rev = await db('spec_revisions').where({ product_id: productId }).first('id')
    await db('spec_limits').where({ revision_id: rev.id }).update({ lsl: 12, usl: 8 })
    const r = await evaluate()
    expect(r.failedRules).toEqual([bad])
    expect(await firings(good)).toHaveLength(1)
    expect(await db('alert_marks').where({ product_id: productId }).first()).toBeUndefined()
  })
})

describe('throttle and subscriptions', () => {
  it('two evaluations within the hour raise one firing and one message per recipient; after the hour a second', async () => {
    const productId = await newProduct('ALR-THR')
    const id = await rule({ name: 'Yield under 95 %', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 95, window_units: 10 })
    const gone = await db('users').where({ email: 'gone@vellmar.example' }).first('id')
    // the engineer follows the rule and the product (one message still), the disabled user follows the product
    await db('alert_subscriptions').insert([
      { user_id: engineerId, target: 'rule', target_id: id }, { user_id: engineerId, target: 'product', target_id: productId },
      { user_id: gone.id, target: 'product', target_id: productId },
    ])
    await post('ALR-THR', 'ALR-THR-1', [10, 7, 10, 10, 10, 10, 10, 10, 10, 10], () => stations['ATE-A1']!)
    const messages = () => db('mail_outbox').where({ template: 'alertRaised' }).where('subject', 'like', '%Yield under 95 \\%%').select('to', 'text', 'html')
    const t0 = Date.now()
    await evaluate({ now: new Date(t0) })
    await db('alert_marks').insert({ product_id: productId, seq: 1 })
    await evaluate({ now: new Date(t0 + 10 * MIN) })
    expect(await firings(id)).toHaveLength(1)
    const first = await messages()
    expect(first.map((m: any) => json(m.to))).toEqual([['eng@vellmar.example']])
    expect(first[0].text).toContain('first-pass yield 90 %')
    await db('alert_marks').insert({ product_id: productId, seq: 1 })
    await evaluate({ now: new Date(t0 + 61 * MIN) })
    expect(await firings(id)).toHaveLength(2)
    expect(await messages()).toHaveLength(2)
  })
})

describe('the evaluation lease', () => {
  it('two evaluators at once: only one evaluates; a dead holder is replaced once its lease runs out', async () => {
    await db('job_leases').where({ name: 'alerts' }).delete()
    const now = new Date()
    const [a, b] = await Promise.all([
      evaluateAlerts(db, { owner: 'node-a', now, leaseMs: 5000 }), evaluateAlerts(db, { owner: 'node-b', now, leaseMs: 5000 }),
    ])
    expect([a.evaluated, b.evaluated].filter(Boolean)).toHaveLength(1)
    const holder = a.evaluated ? 'node-a' : 'node-b'
    const other = a.evaluated ? 'node-b' : 'node-a'
    // the holder renews; the other still waits
    expect(await takeLease(db, 'alerts', holder, 5000, new Date(now.getTime() + 1000))).toBe(true)
    expect((await evaluateAlerts(db, { owner: other, now: new Date(now.getTime() + 2000), leaseMs: 5000 })).evaluated).toBe(false)
    // the holder dies: after its lease ends the other takes over
    expect((await evaluateAlerts(db, { owner: other, now: new Date(now.getTime() + 6001), leaseMs: 5000 })).evaluated).toBe(true)
    expect((await db('job_leases').where({ name: 'alerts' }).first()).owner).toBe(other)
    await db('job_leases').where({ name: 'alerts' }).delete()
  })
})

describe('delivery', () => {
  const freePort = () => new Promise<number>((done) => { const s = net.createServer().listen(0, '127.0.0.1', () => { const p = (s.address() as net.AddressInfo).port; s.close(() => done(p)) }) })
  const policy: SenderPolicy = { leaseMs: 60_000, batch: 50, maxAttempts: 6, backoffBaseMs: 200, backoffCapMs: 400 }

  it('alerts raised while the mail server is down reach each recipient exactly once when it is back', async () => {
    // everything queued so far is out of the way
    await db('mail_outbox').update({ status: 'sent' })
    const productId = await newProduct('ALR-MAIL')
    const r = await rule({ name: 'Mail test yield', kind: 'yield_low', product_id: productId, step: 'tune', threshold: 99, window_units: 5 })
    await db('alert_subscriptions').insert({ user_id: engineerId, target: 'rule', target_id: r })
    const stationRule = await rule({ name: 'Mail test silence', kind: 'station_silent', station_id: stations['ATE-A1']!.id, silent_minutes: 1 })
    await db('alert_subscriptions').insert({ user_id: engineerId, target: 'station', target_id: stations['ATE-A1']!.id })
    await post('ALR-MAIL', 'ALR-MAIL-1', [7, 10, 10, 10, 10], () => stations['ATE-A1']!, 30)
    await db('test_runs').where({ station_id: stations['ATE-A1']!.id }).update({ received_at: new Date(Date.now() - 30 * MIN) })
    await evaluate({ clockMs: 1, now: new Date(Date.now() + 5000) })
    expect(await firings(r)).toHaveLength(1)
    expect(await firings(stationRule)).toHaveLength(1)
    const queued = await db('mail_outbox').where({ status: 'queued' }).orderBy('id')
    // yield → the engineer; silence → the engineer (station follower) and the station's owner
    expect(queued.map((m: any) => json(m.to)[0]).sort()).toEqual(['eng@vellmar.example', 'eng@vellmar.example', 'owner@vellmar.example'])

    const port = await freePort()
    const dir = mkdtempSync(join(tmpdir(), 'tercet-alert-mail-'))
    const deliver = smtpDeliver({ host: '127.0.0.1', port, secure: false, from: 'Tercet <tercet@vellmar.example>' })
    expect(await sendDueMail(db, deliver, 'd', policy)).toEqual({ sent: 0, failed: 3 })
    const fake = await startMailFake({ port, dir })
    try {
      const deadline = Date.now() + 20_000
      while ((await db('mail_outbox').whereIn('id', queued.map((m: any) => m.id)).where({ status: 'sent' })).length < 3) {
        if (Date.now() > deadline) throw new Error('alert notices not delivered within 20 s')
        await sendDueMail(db, deliver, 'd', policy)
        await new Promise((done) => setTimeout(done, 100))
      }
      expect(await sendDueMail(db, deliver, 'd', policy)).toEqual({ sent: 0, failed: 0 })
    } finally { await fake.close() }
    const got = readdirSync(dir).filter((n) => n.endsWith('.json')).map((n) => JSON.parse(readFileSync(join(dir, n), 'utf8')))
    expect(got).toHaveLength(3)
    for (const m of queued) expect(got.filter((g: any) => g.messageId === m.message_id)).toHaveLength(1)
    const site = (process.env.NUXT_PUBLIC_SITE_URL || 'http://localhost:3000').replace(/\/+$/, '')
    expect(got.flatMap((g: any) => g.links)).toContain(`${site}/lots/ALR-MAIL-1`)
    expect(got.flatMap((g: any) => g.links)).toContain(`${site}/stations/${stations['ATE-A1']!.id}`)
  })
})
