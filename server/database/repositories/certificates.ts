// Certificate rows: numbering, issue, status changes and the units' certified flag. Rendering and reading live in
// certificate-documents.ts.
import type { Knex } from 'knex'

const CHUNK = 1000
// a multi-row insert of snapshots stays well under the server's packet limit
const INSERT_BYTES = 4 * 1024 * 1024

function chunks<T>(list: readonly T[], size = CHUNK): T[][] {
  const out: T[][] = []
  for (let i = 0; i < list.length; i += size) out.push(list.slice(i, i + size))
  return out
}

/**
 * Takes `count` consecutive numbers of the year at once: the year's row is created or raised by one statement, which
 * holds its lock until the transaction ends, so concurrent issues wait and never share or skip a number.
 * Returns the first number taken.
 */
export async function reserveNumbers(trx: Knex.Transaction, year: number, count: number): Promise<number> {
  await trx.raw('INSERT INTO certificate_sequences (year, last_number) VALUES (?, ?) ON DUPLICATE KEY UPDATE last_number = last_number + VALUES(last_number)', [year, count])
  const row = await trx('certificate_sequences').where({ year }).first('last_number')
  return Number(row.last_number) - count + 1
}

export type PredecessorRow = { id: number; number: string; unitId: number; status: 'valid' | 'superseded' | 'revoked' }

export async function certificatesById(db: Knex, ids: readonly number[]): Promise<PredecessorRow[]> {
  const out: PredecessorRow[] = []
  for (const part of chunks([...new Set(ids)])) {
    const rows = await db('certificates').whereIn('id', part).select('id', 'number', 'unit_id', 'status')
    out.push(...rows.map((r: any) => ({ id: r.id, number: r.number, unitId: r.unit_id, status: r.status })))
  }
  return out
}

/** The valid certificates of the units, by unit. */
export async function validCertificatesOfUnits(db: Knex, unitIds: readonly number[]): Promise<PredecessorRow[]> {
  const out: PredecessorRow[] = []
  for (const part of chunks([...new Set(unitIds)])) {
    const rows = await db('certificates').whereIn('unit_id', part).where('status', 'valid').select('id', 'number', 'unit_id', 'status')
    out.push(...rows.map((r: any) => ({ id: r.id, number: r.number, unitId: r.unit_id, status: r.status })))
  }
  return out
}

export type NewCertificateRow = {
  number: string; verifyCode: string; unitId: number; shipmentId: number; customerId: number; templateVersion: number
  snapshot: string; issuedAt: Date; issuedBy: number; supersedesId: number | null
}

/** Multi-row inserts, split by size; returns the new ids by certificate number. */
export async function insertCertificates(trx: Knex.Transaction, rows: readonly NewCertificateRow[]): Promise<Map<string, number>> {
  const ids = new Map<string, number>()
  let batch: NewCertificateRow[] = []
  let bytes = 0
  const flush = async () => {
    if (!batch.length) return
    const values: any[] = []
    // the snapshot travels as bytes (a hex literal, written natively) rather than as an escaped string, whose
    // character-by-character escaping cost more than the rest of an issue
    for (const r of batch) values.push(r.number, r.verifyCode, r.unitId, r.shipmentId, r.customerId, 'valid', r.templateVersion, Buffer.from(r.snapshot, 'utf8'), r.issuedAt, r.issuedBy, r.supersedesId)
    const [returned] = await trx.raw(
      `INSERT INTO certificates (number, verify_code, unit_id, shipment_id, customer_id, status, template_version, snapshot, issued_at, issued_by, supersedes_id)
       VALUES ${batch.map(() => '(?, ?, ?, ?, ?, ?, ?, CONVERT(? USING utf8mb4), ?, ?, ?)').join(', ')} RETURNING id, number`, values)
    for (const r of returned as any[]) ids.set(r.number, r.id)
    batch = []
    bytes = 0
  }
  for (const r of rows) {
    const size = 2 * Buffer.byteLength(r.snapshot) + 200
    if (bytes + size > INSERT_BYTES) await flush()
    batch.push(r)
    bytes += size
  }
  await flush()
  return ids
}

/**
 * Moves certificates to `status` with a reason each: a supersession takes only valid ones, a revocation valid and
 * superseded ones. Returns how many changed.
 */
export async function changeStatuses(trx: Knex.Transaction, status: 'superseded' | 'revoked', at: Date, by: number | null, items: readonly { id: number; reason: string }[]): Promise<number> {
  let changed = 0
  const from = status === 'revoked' ? ['valid', 'superseded'] : ['valid']
  for (const part of chunks(items)) {
    const values: any[] = []
    for (const c of part) values.push(c.id, c.reason)
    const [result] = await trx.raw(
      `UPDATE certificates SET status = ?, status_changed_at = ?, status_changed_by = ?, status_reason = CASE id ${part.map(() => 'WHEN ? THEN ?').join(' ')} END
       WHERE id IN (${part.map(() => '?').join(', ')}) AND status IN (${from.map(() => '?').join(', ')})`,
      [status, at, by, ...values, ...part.map((c) => c.id), ...from])
    changed += Number((result as any).affectedRows ?? 0)
  }
  return changed
}

export async function unitsOfCertificates(db: Knex, ids: readonly number[]): Promise<number[]> {
  const out = new Set<number>()
  for (const part of chunks([...new Set(ids)])) {
    for (const r of await db('certificates').whereIn('id', part).select('unit_id')) out.add((r as any).unit_id)
  }
  return [...out]
}

/** A unit is certified while it has a valid certificate. */
export async function recomputeCertified(trx: Knex.Transaction, unitIds: readonly number[]): Promise<void> {
  for (const part of chunks([...new Set(unitIds)])) {
    await trx.raw(`UPDATE units u SET u.certified = EXISTS (SELECT 1 FROM certificates c WHERE c.unit_id = u.id AND c.status = 'valid')
      WHERE u.id IN (${part.map(() => '?').join(', ')})`, part)
  }
}

export async function markCertified(trx: Knex.Transaction, unitIds: readonly number[]): Promise<void> {
  for (const part of chunks([...new Set(unitIds)])) await trx('units').whereIn('id', part).update({ certified: true })
}
