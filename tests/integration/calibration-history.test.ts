import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { ingestRun, RunRejected } from '../../server/services/ingest/ingest-run'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { addCalibration, addInstrument, correctHolding, moveInstrument, supersedeCalibration } from '../../server/services/calibration/history'
import { calibrationAt } from '../../server/services/calibration/in-force'
import { drainRejudgeQueue } from '../../server/services/calibration/rejudge'
import { calibrationGuard } from '../../server/database/repositories/calibration-runs'
import { readHistoryVersion } from '../../server/database/repositories/calibration'
import { changeLotStatus } from '../../server/services/lot-status'
import { RuleError } from '../../server/services/rule-error'
import { validateRun } from '../../server/utils/run-validator'
import { tripleRun } from '../support/stations'

const HOUR = 3_600_000
const DAY = 24 * HOUR
const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
let db: Knex
let engineer: number
let quality: number
let seq = 0
const now = () => new Date()
const ago = (ms: number) => new Date(Date.now() - ms)
const asset = (what: string) => `IT-${tag}-${what}-${++seq}`.slice(0, 32)

async function station(label: string) {
  const name = `CAL-${label}-${tag}`.slice(0, 64)
  const [id] = await db('stations').insert({ name, created_at: ago(200 * DAY) })
  return { id: id!, name }
}

/** Posts one tripler run through the same ingest the stations use, started at `startedAt`. */
async function post(s: { id: number; name: string }, startedAt: Date, extra: Record<string, unknown> = {}) {
  const v = validateRun(tripleRun({ startedAt: startedAt.toISOString(), finishedAt: new Date(startedAt.getTime() + 60_000).toISOString(), lot: `CAL-${tag}`, ...extra }))
  if (!v.ok) throw new Error(JSON.stringify(v.errors))
  const r = await ingestRun(db, s, v.value)
  if (r.status !== 201) throw new Error(`not stored: ${JSON.stringify(r)}`)
  return (await db('test_runs').where({ uuid: v.value.id }).first('id')).id as number
}

async function state(runId: number) {
  const run = await db('test_runs').where({ id: runId }).first('calibration_lapsed')
  const links = await db('run_instruments').where({ run_id: runId }).orderBy('instrument_id').select('instrument_id', 'calibration_id', 'named')
  return { lapsed: !!run.calibration_lapsed, links: links.map((l: any) => [l.instrument_id, l.calibration_id]) }
}

const lastAudit = async (instrumentId: number) => {
  const row = await db('audit_log').where({ entity: 'instrument', entity_id: String(instrumentId) }).orderBy('id', 'desc').first()
  return { ...row, after: typeof row.after === 'string' ? JSON.parse(row.after) : row.after }
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 6 })
  engineer = (await db('users').where({ role: 'engineer' }).first('id')).id
  quality = (await db('users').where({ role: 'quality' }).first('id')).id
})

afterAll(async () => { await db?.destroy() })

describe('runs judged against the calibration history at their test time', () => {
  it('records the instruments in force at the start and flags a run at or past the due date', async () => {
    const s = await station('due')
    const i = await addInstrument(db, engineer, { assetNumber: asset('PS'), kind: 'Power sensor', model: 'PS-18', serial: 'P1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    const due = new Date(Date.now() - 2 * DAY)
    const rec = await addCalibration(db, engineer, i.id, { certificateNumber: 'C-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(40 * DAY).toISOString(), dueAt: due.toISOString() })
    const before = await post(s, new Date(due.getTime() - 1))
    const exactly = await post(s, due)
    const after = await post(s, ago(DAY))
    expect(await state(before)).toEqual({ lapsed: false, links: [[i.id, rec.id]] })
    expect(await state(exactly)).toEqual({ lapsed: true, links: [[i.id, rec.id]] })
    expect(await state(after)).toEqual({ lapsed: true, links: [[i.id, rec.id]] })
    // a run from before the installation took nothing from this instrument
    expect(await state(await post(s, ago(31 * DAY)))).toEqual({ lapsed: false, links: [] })
  })

  it('a new record judges the affected runs again, relinks them and says so in its audit row, all in one transaction', async () => {
    const s = await station('new')
    const i = await addInstrument(db, engineer, { assetNumber: asset('FC'), kind: 'Frequency counter', model: 'FC-3', serial: 'F1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    const old = await addCalibration(db, engineer, i.id, { certificateNumber: 'OLD', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(5 * DAY).toISOString() })
    const early = await post(s, ago(10 * DAY))
    const late = [await post(s, ago(3 * DAY)), await post(s, ago(2 * DAY))]
    expect((await state(late[0]!)).lapsed).toBe(true)

    // the audit row is written after the runs were judged again; when the database refuses it, the record, the
    // links, the flags and the version all stay as they were
    const version = await readHistoryVersion(db)
    const trigger = `refuse_audit_${tag}`.toLowerCase()
    await db.raw(`CREATE TRIGGER ${trigger} BEFORE INSERT ON audit_log FOR EACH ROW
      IF NEW.action = 'calibration_add' AND JSON_VALUE(NEW.after, '$.certificateNumber') = 'REFUSED-${tag}' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit refused for the test';
      END IF`)
    try {
      const refused = await addCalibration(db, engineer, i.id, { certificateNumber: `REFUSED-${tag}`, laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(4 * DAY).toISOString(), dueAt: ago(-300 * DAY).toISOString() }).catch((e) => e)
      expect(String(refused?.message)).toMatch(/audit refused for the test/)
    } finally {
      await db.raw(`DROP TRIGGER IF EXISTS ${trigger}`)
    }
    expect(await db('calibration_records').where({ instrument_id: i.id }).count({ n: '*' })).toEqual([{ n: 1 }])
    for (const id of late) expect(await state(id)).toEqual({ lapsed: true, links: [[i.id, old.id]] })
    expect(await readHistoryVersion(db)).toBe(version)

    const fresh = await addCalibration(db, engineer, i.id, { certificateNumber: 'NEW', laboratory: 'Lab', asFound: 'out_of_tolerance', calibratedOn: ago(4 * DAY).toISOString(), dueAt: ago(-300 * DAY).toISOString() })
    expect(await readHistoryVersion(db)).toBeGreaterThan(version)
    for (const id of late) expect(await state(id)).toEqual({ lapsed: false, links: [[i.id, fresh.id]] })
    expect(await state(early)).toEqual({ lapsed: false, links: [[i.id, old.id]] })
    const audit = await lastAudit(i.id)
    expect(audit.action).toBe('calibration_add')
    expect(audit.user_id).toBe(engineer)
    expect(audit.after).toMatchObject({ recordId: fresh.id, certificateNumber: 'NEW', rejudged: { runs: 2, relinked: 2, nowLapsed: 0, nowInCalibration: 2, lots: [`CAL-${tag}`] } })
  })

  it('a record superseded in the middle of a lot leaves earlier runs under it and flags the later ones', async () => {
    const s = await station('sup')
    const i = await addInstrument(db, engineer, { assetNumber: asset('SA'), kind: 'Signal source analyser', model: 'PNA-40', serial: 'S1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    const rec = await addCalibration(db, engineer, i.id, { certificateNumber: 'WD-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(50 * DAY).toISOString(), dueAt: ago(-200 * DAY).toISOString() })
    const runs = [await post(s, ago(6 * DAY)), await post(s, ago(4 * DAY)), await post(s, ago(2 * DAY))]
    const r = await supersedeCalibration(db, engineer, rec.id, { reason: 'Laboratory withdrew the certificate', effectiveFrom: ago(5 * DAY).toISOString() })
    expect(r.rejudged).toMatchObject({ nowLapsed: 2, nowInCalibration: 0 })
    expect(await state(runs[0]!)).toEqual({ lapsed: false, links: [[i.id, rec.id]] })
    expect(await state(runs[1]!)).toEqual({ lapsed: true, links: [[i.id, null]] })
    expect(await state(runs[2]!)).toEqual({ lapsed: true, links: [[i.id, null]] })
    const audit = await lastAudit(i.id)
    expect(audit).toMatchObject({ action: 'calibration_supersede', after: { recordId: rec.id, reason: 'Laboratory withdrew the certificate' } })
    // never deleted, and superseded once only
    expect(await db('calibration_records').where({ id: rec.id }).first('superseded_reason')).toEqual({ superseded_reason: 'Laboratory withdrew the certificate' })
    const again = await supersedeCalibration(db, engineer, rec.id, { reason: 'again' }).catch((e) => e)
    expect(again).toBeInstanceOf(RuleError)
    expect(again.status).toBe(409)
  })

  it('moving an instrument between stations moves it out of one station\'s later runs and into the other\'s', async () => {
    const a = await station('mvA')
    const b = await station('mvB')
    const i = await addInstrument(db, engineer, { assetNumber: asset('PS'), kind: 'Power sensor', model: 'PS-18', serial: 'P2', stationId: a.id, installedAt: ago(30 * DAY).toISOString() })
    // lapsed five days ago: its presence flags a run
    const rec = await addCalibration(db, engineer, i.id, { certificateNumber: 'MV-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(5 * DAY).toISOString() })
    const aEarly = await post(a, ago(4 * DAY))
    const aLate = await post(a, ago(2 * DAY))
    const bLate = await post(b, ago(2 * DAY))
    expect([(await state(aEarly)).lapsed, (await state(aLate)).lapsed, (await state(bLate)).lapsed]).toEqual([true, true, false])

    const moved = await moveInstrument(db, engineer, i.id, { stationId: b.id, at: ago(3 * DAY).toISOString() })
    expect(moved.rejudged).toMatchObject({ runs: 2, relinked: 2, nowLapsed: 1, nowInCalibration: 1 })
    expect(await state(aEarly)).toEqual({ lapsed: true, links: [[i.id, rec.id]] })
    expect(await state(aLate)).toEqual({ lapsed: false, links: [] })
    expect(await state(bLate)).toEqual({ lapsed: true, links: [[i.id, rec.id]] })
    expect((await lastAudit(i.id))).toMatchObject({ action: 'instrument_move', before: expect.anything(), after: { station: b.name } })

    // one station at a time: a move into the past of its history is refused, and so is an overlapping correction
    const back = await moveInstrument(db, engineer, i.id, { stationId: a.id, at: ago(4 * DAY).toISOString() }).catch((e) => e)
    expect(back).toMatchObject({ status: 409, errors: [{ pointer: '/at' }] })
    const [first, second] = await db('instrument_holdings').where({ instrument_id: i.id }).orderBy('from_at').select('id')
    const overlap = await correctHolding(db, engineer, i.id, first.id, { from: ago(30 * DAY).toISOString(), until: ago(2 * DAY).toISOString() }).catch((e) => e)
    expect(overlap).toMatchObject({ status: 409 })

    // the second holding corrected to begin a day later: the run at two days ago is no longer taken with it
    const corrected = await correctHolding(db, engineer, i.id, second.id, { from: ago(DAY).toISOString(), until: null })
    expect(corrected.rejudged).toMatchObject({ nowInCalibration: 1 })
    expect(await state(bLate)).toEqual({ lapsed: false, links: [] })
    expect((await lastAudit(i.id)).action).toBe('holding_correct')
  })

  it('a run that names its instruments is judged on them, wherever they are, and an unknown asset is refused with a pointer', async () => {
    const s = await station('named')
    const held = await addInstrument(db, engineer, { assetNumber: asset('HELD'), kind: 'Power sensor', model: 'PS-18', serial: 'H1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    await addCalibration(db, engineer, held.id, { certificateNumber: 'H-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(10 * DAY).toISOString() })
    const portable = await addInstrument(db, engineer, { assetNumber: asset('PORT'), kind: 'Power sensor', model: 'PS-18', serial: 'H2' })
    const prec = await addCalibration(db, engineer, portable.id, { certificateNumber: 'P-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(-100 * DAY).toISOString() })
    const named = await post(s, ago(2 * DAY), { instrumentAssets: [portable.assetNumber] })
    expect(await state(named)).toEqual({ lapsed: false, links: [[portable.id, prec.id]] })
    expect(await db('run_instruments').where({ run_id: named }).first('named')).toEqual({ named: 1 })
    expect((await state(await post(s, ago(2 * DAY)))).lapsed).toBe(true)

    // installing the portable sensor on the station changes the station's runs, not the run that named it
    await moveInstrument(db, engineer, portable.id, { stationId: s.id, at: ago(3 * DAY).toISOString() })
    expect(await state(named)).toEqual({ lapsed: false, links: [[portable.id, prec.id]] })

    const err = await calibrationAt(db, s.id, now(), [portable.assetNumber, 'NO-SUCH-ASSET']).catch((e) => e)
    expect(err).toBeInstanceOf(RunRejected)
    expect(err.errors).toEqual([{ pointer: '/instrumentAssets/1', message: 'no instrument has this asset number' }])
  })

  it('the batch writer records the same links as the single-run writer', async () => {
    const s = await station('batch')
    const i = await addInstrument(db, engineer, { assetNumber: asset('B'), kind: 'Frequency counter', model: 'FC-3', serial: 'B1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    const rec = await addCalibration(db, engineer, i.id, { certificateNumber: 'B-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(3 * DAY).toISOString() })
    const runs = [ago(5 * DAY), ago(DAY)].map((t) => tripleRun({ lot: `CAL-${tag}`, startedAt: t.toISOString(), finishedAt: new Date(t.getTime() + 60_000).toISOString() }))
    const results = await ingestBatch(db, s, runs)
    expect(results.map((r) => r.status)).toEqual([201, 201])
    const ids = await Promise.all(runs.map(async (r) => (await db('test_runs').where({ uuid: r.id }).first('id')).id))
    expect(await state(ids[0])).toEqual({ lapsed: false, links: [[i.id, rec.id]] })
    expect(await state(ids[1])).toEqual({ lapsed: true, links: [[i.id, rec.id]] })
  })

  it('a run written on a judgement older than the history is queued and judged again', async () => {
    const s = await station('guard')
    const i = await addInstrument(db, engineer, { assetNumber: asset('G'), kind: 'Power sensor', model: 'PS-18', serial: 'G1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    const rec = await addCalibration(db, engineer, i.id, { certificateNumber: 'G-1', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(60 * DAY).toISOString(), dueAt: ago(-60 * DAY).toISOString() })
    const run = await post(s, ago(DAY))
    // as if the run had been judged before the record existed: no link, flagged
    await db('run_instruments').where({ run_id: run }).delete()
    await db('test_runs').where({ id: run }).update({ calibration_lapsed: true })
    const current = await readHistoryVersion(db)
    await db.transaction(async (trx) => {
      const fine = calibrationGuard([run], current)
      await trx.raw(fine.sql, fine.values as any[])
    })
    // not queued (and so not judged again by a server's background worker either)
    expect(await db('calibration_rejudge').where({ run_id: run }).count({ n: '*' })).toEqual([{ n: 0 }])
    expect(await state(run)).toEqual({ lapsed: true, links: [] })
    await db.transaction(async (trx) => {
      const stale = calibrationGuard([run], current - 1)
      await trx.raw(stale.sql, stale.values as any[])
    })
    // a server's background worker may take it from the queue first; either way it ends judged again
    await drainRejudgeQueue(db)
    expect(await db('calibration_rejudge').where({ run_id: run }).count({ n: '*' })).toEqual([{ n: 0 }])
    expect(await state(run)).toEqual({ lapsed: false, links: [[i.id, rec.id]] })
  })
})

describe('release readiness follows the calibration history', () => {
  it('a lot held back by a lapsed instrument becomes releasable when the calibration that covered it is recorded', async () => {
    const s = await station('rel')
    const lot = `CALR-${tag}`.slice(0, 32)
    const serial = `CALR-${tag}-1`
    const i = await addInstrument(db, engineer, { assetNumber: asset('R'), kind: 'Power sensor', model: 'PS-18', serial: 'R1', stationId: s.id, installedAt: ago(30 * DAY).toISOString() })
    await addCalibration(db, engineer, i.id, { certificateNumber: 'R-OLD', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(300 * DAY).toISOString(), dueAt: ago(3 * DAY).toISOString() })
    const t = ago(2 * DAY)
    const at = (min: number) => new Date(t.getTime() + min * 60_000)
    await post(s, at(0), { lot, serial, step: 'tune', measurements: [{ name: 'output_power', value: 7, unit: 'dBm' }] })
    await post(s, at(10), { lot, serial, step: 'burn-in', measurements: [{ name: 'output_power', value: 7, unit: 'dBm' }, { name: 'supply_current', value: 78, unit: 'mA' }] })
    await post(s, at(20), { lot, serial })

    const refused = await changeLotStatus(db, quality, lot, 'release').catch((e) => e)
    expect(refused).toBeInstanceOf(RuleError)
    expect(refused.extra.notReadyUnits).toEqual([{ serial, problems: ['latest tune result was taken past a calibration due date', 'latest burn-in result was taken past a calibration due date', 'latest final result was taken past a calibration due date'] }])

    // the recalibration done four days ago had not been entered
    await addCalibration(db, engineer, i.id, { certificateNumber: 'R-NEW', laboratory: 'Lab', asFound: 'in_tolerance', calibratedOn: ago(4 * DAY).toISOString(), dueAt: ago(-360 * DAY).toISOString() })
    expect(await changeLotStatus(db, quality, lot, 'release')).toBe('released')
  })
})
