// Reading a typed, scanned or uploaded list of serials (pure). A line is `serial` or `partNumber,serial`
// (comma, semicolon or tab); blank lines and a header line are skipped; quotes around a field are dropped.
import type { SerialPreviewRow, SerialRowVerdict } from '../../../shared/types/shipment'

export type ListLine = { line: number; text: string; partNumber: string | null; serial: string | null; malformed: string | null }

const HEADER = /^"?(part[ _-]?(number|no)?"?\s*[,;\t]\s*"?)?serial([ _-]?(number|no))?"?$/i
const unquote = (s: string) => s.trim().replace(/^"(.*)"$/, '$1').replace(/""/g, '"').trim()

export function parseSerialLines(lines: readonly string[], firstLine = 1): ListLine[] {
  const out: ListLine[] = []
  lines.forEach((raw, i) => {
    const text = raw.replace(/\r$/, '').trim()
    if (!text) return
    const line = firstLine + i
    if (line === 1 && HEADER.test(text)) return
    const fields = text.split(/[,;\t]/).map(unquote)
    let partNumber: string | null = null
    let serial: string | null = null
    let malformed: string | null = null
    if (fields.length === 1) serial = fields[0]!
    else if (fields.length === 2) { partNumber = fields[0]! || null; serial = fields[1]! }
    else malformed = 'a line holds a serial, or a part number and a serial'
    if (!malformed && !serial) malformed = 'no serial on this line'
    if (!malformed && serial!.length > 64) malformed = 'a serial has at most 64 characters'
    out.push({ line, text: text.slice(0, 200), partNumber, serial: malformed ? null : serial, malformed })
  })
  return out
}

export type Candidate = { unitId: number; productId: number; partNumber: string; serial: string; lot: string; liveShipmentId: number | null; liveShipmentCode: string | null }
export type Standing = { verdict: 'pass' | 'fail' | null; scrapped: boolean }

export type ClassifyContext = {
  shipmentId: number
  /** the part the shipment is restricted to */
  partNumber: string | null
  /** units by serial, of every part */
  bySerial: ReadonlyMap<string, Candidate[]>
  standing: ReadonlyMap<number, Standing>
}

export type ClassifiedRow = SerialPreviewRow & { unitId: number | null }

const MESSAGES: Partial<Record<SerialRowVerdict, string>> = { unknown_serial: 'no unit has this serial' }

export function classifyLines(lines: readonly ListLine[], ctx: ClassifyContext, seen = new Set<number>()): ClassifiedRow[] {
  return lines.map((l): ClassifiedRow => {
    const row = (verdict: SerialRowVerdict, message: string | null, c?: Candidate): ClassifiedRow => ({
      line: l.line, text: l.text, verdict, message: message ?? MESSAGES[verdict] ?? null,
      partNumber: c?.partNumber ?? l.partNumber, serial: c?.serial ?? l.serial, lot: c?.lot ?? null, unitId: verdict === 'ok' ? c!.unitId : null,
    })
    if (l.malformed) return row('malformed', l.malformed)
    const all = ctx.bySerial.get(l.serial!) ?? []
    if (!all.length) return row('unknown_serial', null)
    if (l.partNumber && ctx.partNumber && l.partNumber !== ctx.partNumber) return row('wrong_part', `the shipment takes only ${ctx.partNumber}`)
    const wanted = l.partNumber ?? ctx.partNumber
    const matches = wanted ? all.filter((c) => c.partNumber === wanted) : all
    if (!matches.length) return row('wrong_part', `${l.serial} is a unit of ${[...new Set(all.map((c) => c.partNumber))].join(', ')}, not ${wanted}`)
    if (matches.length > 1) return row('ambiguous', `units of ${matches.map((c) => c.partNumber).join(' and ')} have this serial: write the part number before it`)
    const c = matches[0]!
    if (seen.has(c.unitId)) return row('duplicate', 'already earlier in the list', c)
    seen.add(c.unitId)
    if (c.liveShipmentId === ctx.shipmentId) return row('already_in_shipment', 'already in this shipment', c)
    if (c.liveShipmentId !== null) return row('in_other_shipment', `already in shipment ${c.liveShipmentCode}`, c)
    const s = ctx.standing.get(c.unitId)
    if (s?.scrapped) return row('not_passing', 'scrapped', c)
    if (s?.verdict !== 'pass') return row('not_passing', s?.verdict === 'fail' ? 'its latest result at a step is a fail' : 'not yet passed at every step', c)
    return row('ok', null, c)
  })
}

export const ROW_VERDICTS: SerialRowVerdict[] = ['ok', 'unknown_serial', 'wrong_part', 'in_other_shipment', 'already_in_shipment', 'not_passing', 'duplicate', 'ambiguous', 'malformed']

export function countVerdicts(rows: readonly SerialPreviewRow[]): Record<SerialRowVerdict, number> {
  const counts = Object.fromEntries(ROW_VERDICTS.map((v) => [v, 0])) as Record<SerialRowVerdict, number>
  for (const r of rows) counts[r.verdict] += 1
  return counts
}
