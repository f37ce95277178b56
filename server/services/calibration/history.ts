// Changes of an instrument's history: registration, installation and moves, corrected holding dates, new and
// superseded calibration records. Each is one transaction that raises the history version, judges the runs it
// touches again and writes its audit row.
import type { Knex } from 'knex'
import { forgetHistoryVersion } from './in-force'
import type { CalibrationAdded, CalibrationSuperseded, HoldingCorrected, InstrumentAdded, InstrumentMoved } from '../../../shared/types/calibration'
import { dueInstant } from '../../../shared/utils/calibration'
import { spansOverlap } from '../../../shared/utils/calibration-history'
import { writeAudit } from '../../database/repositories/audit'
import {
  holdingsOfInstrument, insertCertificate, insertHolding, insertInstrument, insertRecord, instrumentOfRecord, lockInstrument, lockRecord,
  markSuperseded, raiseHistoryVersion, stationRef, updateHolding, type AsFound, type HoldingRow,
} from '../../database/repositories/calibration'
import { RuleError } from '../rule-error'
import { decodeCertificatePdf } from './certificate-file'
import { displayFileName } from '../../../shared/utils/upload-text'
import { openImpactReview } from './impact-open'
import { rejudgeRuns, runsTouchedByHolding, runsTouchedByRecords, type RejudgeSummary } from './rejudge'
import { writeTransaction } from '../../database/write-retries'

export type NewInstrument = { assetNumber: string; kind: string; model: string; serial: string; stationId?: number; installedAt?: string }
export type InstrumentMove = { stationId: number | null; at?: string }
export type HoldingDates = { from: string; until: string | null }
export type NewCalibration = {
  certificateNumber: string; laboratory: string; asFound: AsFound; calibratedOn: string; dueAt: string
  certificatePdf?: string; certificateFileName?: string
}
export type Supersession = { reason: string; effectiveFrom?: string }

// a clock a few minutes ahead of the server's is not a claim about the future
const SLACK_MS = 5 * 60_000
const iso = (d: Date | null) => (d ? d.toISOString() : null)

function notLater(value: Date, now: Date, pointer: string, what: string): void {
  if (value.getTime() > now.getTime() + SLACK_MS) throw new RuleError(422, `${what} lies in the future.`, [{ pointer, message: 'must not be in the future' }])
}

function text(value: string, pointer: string, what: string): string {
  const v = value.trim()
  if (!v) throw new RuleError(400, `${what} must not be blank.`, [{ pointer, message: 'must not be blank' }])
  return v
}

async function existingStation(trx: Knex, id: number, pointer: string) {
  const s = await stationRef(trx, id)
  if (!s) throw new RuleError(422, `There is no station ${id}.`, [{ pointer, message: 'no such station' }])
  return s
}

/** The transaction of every history change: the version row first, so runs in flight are committed before we look. */
async function historyChange<T>(db: Knex, work: (trx: Knex.Transaction) => Promise<T>): Promise<T> {
  const done = await writeTransaction(db, async (trx) => {
    await raiseHistoryVersion(trx)
    return work(trx)
  })
  // this process judges its next run at the new version at once; others within a second (their guard covers it)
  forgetHistoryVersion()
  return done
}

async function lockedInstrument(trx: Knex.Transaction, id: number) {
  const i = await lockInstrument(trx, id)
  if (!i) throw new RuleError(404, 'No such instrument.')
  return i
}

const describeHolding = (h: HoldingRow, station: string) => ({ holdingId: h.id, station, from: iso(h.from), until: iso(h.until) })

/** Registers an instrument, installed on a station from `installedAt` (default now) when one is given. */
export async function addInstrument(db: Knex, actorId: number | null, input: NewInstrument, now = new Date()): Promise<InstrumentAdded> {
  const fields = {
    assetNumber: text(input.assetNumber, '/assetNumber', 'The asset number'), kind: text(input.kind, '/kind', 'The kind'),
    model: text(input.model, '/model', 'The model'), serial: text(input.serial, '/serial', 'The serial'),
  }
  if (input.installedAt && input.stationId === undefined) throw new RuleError(400, 'An installation date needs the station.', [{ pointer: '/stationId', message: 'is required with installedAt' }])
  const installedAt = input.installedAt ? new Date(input.installedAt) : now
  notLater(installedAt, now, '/installedAt', 'The installation')
  try {
    return await historyChange(db, async (trx) => {
      const station = input.stationId === undefined ? null : await existingStation(trx, input.stationId, '/stationId')
      const id = await insertInstrument(trx, { ...fields, createdBy: actorId })
      let rejudged: RejudgeSummary | null = null
      if (station) {
        await insertHolding(trx, { instrumentId: id, stationId: station.id, from: installedAt, until: null })
        rejudged = await rejudgeRuns(trx, await runsTouchedByHolding(trx, station.id, installedAt, null))
      }
      await writeAudit(trx, {
        userId: actorId, action: 'instrument_add', entity: 'instrument', entityId: id,
        after: { ...fields, station: station?.name ?? null, installedAt: station ? iso(installedAt) : null, rejudged },
      })
      return { id, ...fields, rejudged }
    })
  } catch (e) {
    if ((e as any)?.code === 'ER_DUP_ENTRY') throw new RuleError(409, `Asset number ${fields.assetNumber} is already registered.`, [{ pointer: '/assetNumber', message: 'already registered' }])
    throw e
  }
}

/**
 * Installs the instrument on a station, moves it to another, or (station null) takes it off the one holding it,
 * at `at` (default now): the current holding ends there and the new one begins there.
 */
export async function moveInstrument(db: Knex, actorId: number | null, instrumentId: number, input: InstrumentMove, now = new Date()): Promise<InstrumentMoved> {
  const at = input.at ? new Date(input.at) : now
  notLater(at, now, '/at', 'The move')
  return historyChange(db, async (trx) => {
    const instrument = await lockedInstrument(trx, instrumentId)
    const holdings = await holdingsOfInstrument(trx, instrumentId)
    const last = holdings[holdings.length - 1]
    const open = last && last.until === null ? last : undefined
    if (open && input.stationId === open.stationId) throw new RuleError(409, 'The instrument is already on that station.', [{ pointer: '/stationId', message: 'already holds it' }])
    if (!open && input.stationId === null) throw new RuleError(409, 'The instrument is not on any station.', [{ pointer: '/stationId', message: 'the instrument is on no station' }])
    const since = open ? open.from : last?.until
    if (since && at.getTime() <= since.getTime()) {
      throw new RuleError(409, `The move must come after ${since.toISOString()}, where the instrument's history ends; correct earlier holdings instead.`, [{ pointer: '/at', message: 'before the end of the instrument\'s history' }])
    }
    const to = input.stationId === null ? null : await existingStation(trx, input.stationId, '/stationId')
    const from = open ? await stationRef(trx, open.stationId) : null
    const touched = []
    if (open) {
      await updateHolding(trx, open.id, { from: open.from, until: at })
      touched.push(...await runsTouchedByHolding(trx, open.stationId, at, null))
    }
    if (to) {
      await insertHolding(trx, { instrumentId, stationId: to.id, from: at, until: null })
      touched.push(...await runsTouchedByHolding(trx, to.id, at, null))
    }
    const rejudged = await rejudgeRuns(trx, touched)
    await writeAudit(trx, {
      userId: actorId, action: 'instrument_move', entity: 'instrument', entityId: instrumentId,
      before: { assetNumber: instrument.assetNumber, station: from?.name ?? null, since: iso(open?.from ?? null) },
      after: { assetNumber: instrument.assetNumber, station: to?.name ?? null, at: iso(at), rejudged },
    })
    return { instrumentId, station: to ?? null, at: at.toISOString(), rejudged }
  })
}

/** Corrects the dates of one holding; it may not overlap another holding of the same instrument. */
export async function correctHolding(db: Knex, actorId: number | null, instrumentId: number, holdingId: number, input: HoldingDates, now = new Date()): Promise<HoldingCorrected> {
  const from = new Date(input.from)
  const until = input.until === null ? null : new Date(input.until)
  notLater(from, now, '/from', 'The start of the holding')
  if (until) notLater(until, now, '/until', 'The end of the holding')
  if (until && until.getTime() <= from.getTime()) throw new RuleError(422, 'A holding must end after it begins.', [{ pointer: '/until', message: 'must be after from' }])
  return historyChange(db, async (trx) => {
    const instrument = await lockedInstrument(trx, instrumentId)
    const holdings = await holdingsOfInstrument(trx, instrumentId)
    const old = holdings.find((h) => h.id === holdingId)
    if (!old) throw new RuleError(404, 'No such holding of this instrument.')
    const clash = holdings.find((h) => h.id !== holdingId && spansOverlap(h, { from, until }))
    if (clash) {
      const s = await stationRef(trx, clash.stationId)
      throw new RuleError(409, `The instrument was on ${s?.name ?? 'another station'} from ${clash.from.toISOString()}${clash.until ? ` to ${clash.until.toISOString()}` : ' on'}; holdings may not overlap.`,
        [{ pointer: until && clash.from.getTime() >= from.getTime() ? '/until' : '/from', message: 'overlaps another holding of this instrument' }])
    }
    await updateHolding(trx, holdingId, { from, until })
    const start = from.getTime() < old.from.getTime() ? from : old.from
    const end = until === null || old.until === null ? null : until.getTime() > old.until.getTime() ? until : old.until
    const rejudged = await rejudgeRuns(trx, await runsTouchedByHolding(trx, old.stationId, start, end))
    const station = (await stationRef(trx, old.stationId))?.name ?? String(old.stationId)
    await writeAudit(trx, {
      userId: actorId, action: 'holding_correct', entity: 'instrument', entityId: instrumentId,
      before: { assetNumber: instrument.assetNumber, ...describeHolding(old, station) },
      after: { assetNumber: instrument.assetNumber, ...describeHolding({ ...old, from, until }, station), rejudged },
    })
    return { holdingId, from: from.toISOString(), until: iso(until), rejudged }
  })
}

/** Adds a calibration record, with its certificate PDF when one is given; in force from its calibration date. */
export async function addCalibration(db: Knex, actorId: number | null, instrumentId: number, input: NewCalibration, now = new Date()): Promise<CalibrationAdded> {
  const calibratedOn = dueInstant(input.calibratedOn)
  const dueAt = dueInstant(input.dueAt)
  const fields = { certificateNumber: text(input.certificateNumber, '/certificateNumber', 'The certificate number'), laboratory: text(input.laboratory, '/laboratory', 'The laboratory') }
  notLater(calibratedOn, now, '/calibratedOn', 'The calibration')
  if (dueAt.getTime() <= calibratedOn.getTime()) throw new RuleError(422, 'The due date must come after the calibration.', [{ pointer: '/dueAt', message: 'must be after calibratedOn' }])
  // checked before anything is written: a refused document leaves no record behind
  const file = input.certificatePdf === undefined ? null : decodeCertificatePdf(input.certificatePdf)
  if (file && !file.ok) throw new RuleError(file.status, `The certificate ${file.message}.`, [{ pointer: '/certificatePdf', message: file.message }])
  return historyChange(db, async (trx) => {
    const instrument = await lockedInstrument(trx, instrumentId)
    const id = await insertRecord(trx, { instrumentId, ...fields, asFound: input.asFound, calibratedOn, dueAt, createdBy: actorId })
    // the client's name for the document, kept only to show: never a path, never used to find the file
    const fileName = displayFileName(input.certificateFileName, '') || null
    if (file?.ok) await insertCertificate(trx, { recordId: id, pdf: file.pdf, sha256: file.sha256, fileName })
    const rejudged = await rejudgeRuns(trx, await runsTouchedByRecords(trx, instrumentId, calibratedOn))
    await writeAudit(trx, {
      userId: actorId, action: 'calibration_add', entity: 'instrument', entityId: instrumentId,
      after: {
        assetNumber: instrument.assetNumber, recordId: id, ...fields, asFound: input.asFound, calibratedOn: iso(calibratedOn), dueAt: iso(dueAt),
        certificate: file?.ok ? { bytes: file.pdf.length, sha256: file.sha256, fileName } : null, rejudged,
      },
    })
    // found out of tolerance: the review of what the instrument measured since it was last found right opens with the record
    const impactId = input.asFound === 'out_of_tolerance' ? await openImpactReview(trx, id, instrumentId, actorId, now) : null
    return { id, instrumentId, rejudged, impactId }
  })
}

/** Supersedes a record from `effectiveFrom` (default now) with a reason; the record itself stays. */
export async function supersedeCalibration(db: Knex, actorId: number | null, recordId: number, input: Supersession, now = new Date()): Promise<CalibrationSuperseded> {
  const reason = text(input.reason, '/reason', 'The reason')
  const from = input.effectiveFrom ? new Date(input.effectiveFrom) : now
  notLater(from, now, '/effectiveFrom', 'The supersession')
  const instrumentId = await instrumentOfRecord(db, recordId)
  if (instrumentId === undefined) throw new RuleError(404, 'No such calibration record.')
  return historyChange(db, async (trx) => {
    const instrument = await lockedInstrument(trx, instrumentId)
    const record = (await lockRecord(trx, recordId))!
    if (record.supersededFrom) {
      throw new RuleError(409, `Record ${record.certificateNumber ?? recordId} was already superseded from ${record.supersededFrom.toISOString()}: ${record.supersededReason}`)
    }
    await markSuperseded(trx, recordId, { from, reason, at: now, by: actorId })
    const since = from.getTime() > record.calibratedOn.getTime() ? from : record.calibratedOn
    const rejudged = await rejudgeRuns(trx, await runsTouchedByRecords(trx, instrumentId, since))
    await writeAudit(trx, {
      userId: actorId, action: 'calibration_supersede', entity: 'instrument', entityId: instrumentId,
      before: { assetNumber: instrument.assetNumber, recordId, certificateNumber: record.certificateNumber, supersededFrom: null },
      after: { assetNumber: instrument.assetNumber, recordId, certificateNumber: record.certificateNumber, supersededFrom: iso(from), reason, rejudged },
    })
    return { id: recordId, supersededFrom: from.toISOString(), rejudged }
  })
}
