import type { Knex } from 'knex'
import type { SerialPreview } from '../../../shared/types/shipment'
import { writeAudit } from '../../database/repositories/audit'
import { dispositionsOf } from '../../database/repositories/retest'
import { findShipment, lockShipment } from '../../database/repositories/shipments'
import {
  countShipmentUnits, deleteShipmentUnits, insertShipmentUnits, productSteps, stepStatesOf, unitsBySerials, unitsOfLot, type SerialMatch,
} from '../../database/repositories/shipment-units'
import { binaryKind, headBytes, notTextReason } from '../../../shared/utils/upload-text'
import { RuleError } from '../rule-error'
import { classifyLines, countVerdicts, parseSerialLines, type ClassifiedRow, type ListLine, type Standing } from './serial-list'
import { overallVerdict } from './unit-verdict'
import { writeTransaction } from '../../database/write-retries'

export const MAX_SHIPMENT_UNITS = 10_000
export const MAX_LIST_LINES = 10_000
/** 10,000 lines of up to 300 characters, as JSON, with room to spare */
export const MAX_LIST_BODY_BYTES = 4 * 1024 * 1024

export type SerialRequest = { lines?: string[]; firstLine?: number; lot?: string; serials?: string[] }

/** Whether each unit passed every step of its product, and whether quality scrapped it (a few statements for any number of units). */
async function standingOf(db: Knex, units: readonly SerialMatch[]): Promise<Map<number, Standing>> {
  const ids = units.map((u) => u.unitId)
  const [states, steps, dispositions] = await Promise.all([stepStatesOf(db, ids), productSteps(db, units.map((u) => u.productId)), dispositionsOf(db, ids)])
  return new Map(units.map((u) => [u.unitId, {
    verdict: overallVerdict(steps.get(u.productId) ?? [], states.get(u.unitId) ?? []),
    scrapped: (dispositions.get(u.unitId) ?? []).some((d) => d.kind === 'scrap'),
  }]))
}

function group(units: readonly SerialMatch[]): Map<string, SerialMatch[]> {
  const out = new Map<string, SerialMatch[]>()
  for (const u of units) out.set(u.serial, [...(out.get(u.serial) ?? []), u])
  return out
}

/**
 * A list is text, one serial a line: a file of another kind read as text (a PDF, a workbook) is refused whole, as is
 * a line holding NUL, control characters or bytes that were not UTF-8, each named by its pointer.
 */
function textOnly(lines: readonly string[], firstLine: number): void {
  const kind = lines.length ? binaryKind(headBytes(lines[0]!)) : undefined
  if (kind && firstLine === 1) throw new RuleError(422, `The list is ${kind}, not text with one serial a line.`, [{ pointer: '/lines/0', message: `the file is ${kind}` }], { detectedKind: kind })
  const bad: { pointer: string; message: string }[] = []
  lines.forEach((l, i) => {
    const why = notTextReason(l)
    if (why && bad.length < 20) bad.push({ pointer: `/lines/${i}`, message: `line ${firstLine + i} ${why}` })
  })
  if (bad.length) throw new RuleError(422, 'The list is not plain text: save it as UTF-8 text with one serial a line. Nothing was checked or added.', bad)
}

/** The rows of a request: a typed or uploaded list, or a lot (all its units, or the chosen serials of it). */
async function check(db: Knex, shipment: { id: number; partNumber: string | null }, req: SerialRequest): Promise<ClassifiedRow[]> {
  if (req.lines) textOnly(req.lines, req.firstLine ?? 1)
  if (req.lot !== undefined) {
    const units = await unitsOfLot(db, req.lot)
    if (!units) throw new RuleError(422, `No lot ${req.lot}.`, [{ pointer: '/lot', message: 'no such lot' }])
    const chosen = req.serials?.length ? new Set(req.serials) : null
    const lines: ListLine[] = []
    const listed = chosen ? req.serials! : units.map((u) => u.serial)
    listed.forEach((serial, i) => lines.push({ line: i + 1, text: serial, partNumber: null, serial, malformed: null }))
    const inLot = units.filter((u) => !chosen || chosen.has(u.serial))
    // serials are unique within a lot (one part per lot), so the lot itself resolves them
    return classifyLines(lines, { shipmentId: shipment.id, partNumber: shipment.partNumber, bySerial: group(inLot), standing: await standingOf(db, inLot) })
  }
  const lines = parseSerialLines(req.lines ?? [], req.firstLine ?? 1)
  const units = await unitsBySerials(db, lines.filter((l) => l.serial).map((l) => l.serial!))
  return classifyLines(lines, { shipmentId: shipment.id, partNumber: shipment.partNumber, bySerial: group(units), standing: await standingOf(db, units) })
}

function exactlyOneSource(req: SerialRequest) {
  if ((req.lines === undefined) === (req.lot === undefined)) throw new RuleError(400, 'Send either lines of a list or a lot.', [{ pointer: '', message: 'exactly one of lines and lot' }])
  if (req.serials !== undefined && req.lot === undefined) throw new RuleError(400, 'Chosen serials go with a lot.', [{ pointer: '/serials', message: 'only with lot' }])
}

function tooMany(n: number) {
  if (n > MAX_LIST_LINES) throw new RuleError(413, `A list has at most ${MAX_LIST_LINES} lines.`, [{ pointer: '/lines', message: `at most ${MAX_LIST_LINES} lines` }])
}

function strip(rows: ClassifiedRow[]) {
  return rows.map(({ unitId: _u, ...r }) => r)
}

/** What adding the list would do, row by row; stores nothing. */
export async function previewSerials(db: Knex, shipmentId: number, req: SerialRequest): Promise<SerialPreview> {
  exactlyOneSource(req)
  tooMany(req.lines?.length ?? req.serials?.length ?? 0)
  const s = await findShipment(db, shipmentId)
  if (!s) throw new RuleError(404, 'No such shipment.')
  if (s.status !== 'draft') throw new RuleError(409, `Shipment ${s.code} is ${s.status}: serials change only on a draft.`)
  const rows = await check(db, s, req)
  return { rows: strip(rows), counts: countVerdicts(rows), addable: rows.filter((r) => r.verdict === 'ok').length }
}

/**
 * Adds the list in one transaction, checked again under the shipment's lock: every row must be ok, or nothing is
 * stored. Adding a whole lot takes its passing units and leaves the others out.
 */
export async function addSerials(db: Knex, actorId: number, shipmentId: number, req: SerialRequest, now = new Date()) {
  exactlyOneSource(req)
  tooMany(req.lines?.length ?? req.serials?.length ?? 0)
  return writeTransaction(db, async (trx) => {
    const locked = await lockShipment(trx, shipmentId)
    if (!locked) throw new RuleError(404, 'No such shipment.')
    if (locked.status !== 'draft') throw new RuleError(409, `Shipment ${locked.code} is ${locked.status}: serials change only on a draft.`)
    const s = (await findShipment(trx, shipmentId))!
    const rows = await check(trx, s, req)
    const wholeLot = req.lot !== undefined && !req.serials?.length
    const bad = wholeLot ? [] : rows.filter((r) => r.verdict !== 'ok')
    if (bad.length) {
      throw new RuleError(409, `${bad.length} of ${rows.length} rows cannot be added; nothing was added.`, [], { rows: strip(bad).slice(0, 500), counts: countVerdicts(rows) })
    }
    const ids = rows.filter((r) => r.verdict === 'ok').map((r) => r.unitId!)
    if (!ids.length) throw new RuleError(422, 'No unit to add.', [{ pointer: req.lot !== undefined ? '/lot' : '/lines', message: 'no addable unit' }])
    const { live } = await countShipmentUnits(trx, shipmentId)
    if (live + ids.length > MAX_SHIPMENT_UNITS) throw new RuleError(413, `A shipment holds at most ${MAX_SHIPMENT_UNITS} units; it has ${live}.`)
    await insertShipmentUnits(trx, shipmentId, ids, now)
    await writeAudit(trx, { userId: actorId, action: 'add_units', entity: 'shipment', entityId: s.code, after: { added: ids.length, ...(req.lot !== undefined ? { lot: req.lot } : {}), serials: rows.filter((r) => r.verdict === 'ok').map((r) => `${r.partNumber},${r.serial}`) } })
    return { added: ids.length, units: live + ids.length }
  })
}

export type RemoveRequest = { units: { partNumber: string; serial: string }[] }

export async function removeSerials(db: Knex, actorId: number, shipmentId: number, req: RemoveRequest) {
  return writeTransaction(db, async (trx) => {
    const locked = await lockShipment(trx, shipmentId)
    if (!locked) throw new RuleError(404, 'No such shipment.')
    if (locked.status !== 'draft') throw new RuleError(409, `Shipment ${locked.code} is ${locked.status}: serials change only on a draft.`)
    const matches = await unitsBySerials(trx, req.units.map((u) => u.serial))
    const wanted = new Set(req.units.map((u) => `${u.partNumber}\u0000${u.serial}`))
    const ids = matches.filter((m) => m.liveShipmentId === shipmentId && wanted.has(`${m.partNumber}\u0000${m.serial}`)).map((m) => m.unitId)
    const removed = await deleteShipmentUnits(trx, shipmentId, ids)
    if (removed) await writeAudit(trx, { userId: actorId, action: 'remove_units', entity: 'shipment', entityId: locked.code, after: { removed, serials: req.units.map((u) => `${u.partNumber},${u.serial}`) } })
    return { removed }
  })
}
