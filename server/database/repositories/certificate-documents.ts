// Rendering leases and stored documents of certificates, and the reads behind the download and the public check.
// A lease is the row's render_lease_owner / render_lease_until, taken in a short transaction; the document is stored
// only by the owner of a live lease, so two renders never both store.
import type { Knex } from 'knex'
import { writeTransaction } from '../write-retries'

export type CertificateRef = {
  id: number; number: string; customerId: number; status: 'valid' | 'superseded' | 'revoked'
  sha256: string | null; renderedAt: Date | null
}

const ref = (r: any): CertificateRef => ({
  id: r.id, number: r.number, customerId: r.customer_id, status: r.status, sha256: r.sha256 ?? null, renderedAt: r.rendered_at ?? null,
})

/** The certificate and, once rendered, its stored document, in one read. */
export async function certificateWithDocument(db: Knex, number: string): Promise<(CertificateRef & { pdf: Buffer | null }) | undefined> {
  const r = await db('certificates as c').leftJoin('certificate_documents as d', 'd.certificate_id', 'c.id').where('c.number', number)
    .first('c.id', 'c.number', 'c.customer_id', 'c.status', 'c.sha256', 'c.rendered_at', 'd.pdf')
  return r ? { ...ref(r), pdf: r.pdf ?? null } : undefined
}

export async function certificateByNumber(db: Knex, number: string): Promise<CertificateRef | undefined> {
  const r = await db('certificates').where({ number }).first('id', 'number', 'customer_id', 'status', 'sha256', 'rendered_at')
  return r ? ref(r) : undefined
}

/** Up to `limit` unrendered certificates whose lease (or error backoff) has run out, leased to `owner`. */
export async function leaseUnrendered(db: Knex, owner: string, now: Date, until: Date, limit: number): Promise<number[]> {
  return writeTransaction(db, async (trx) => {
    const rows = await trx.raw(
      `SELECT id FROM certificates WHERE rendered_at IS NULL AND (render_lease_until IS NULL OR render_lease_until < ?)
       ORDER BY id LIMIT ? FOR UPDATE SKIP LOCKED`, [now, limit])
    const ids = (rows[0] as any[]).map((r) => r.id as number)
    if (ids.length) await trx('certificates').whereIn('id', ids).update({ render_lease_owner: owner, render_lease_until: until })
    return ids
  })
}

export type LeaseState = 'rendered' | 'leased' | 'busy' | 'missing'
export type Lease = { state: LeaseState; templateVersion?: number; snapshot?: string }

/**
 * Leases one certificate for rendering on demand, regardless of an error backoff (someone is waiting for it), and
 * reads its snapshot in the same round trip; 'busy' while another owner's lease is live.
 */
export async function leaseOne(db: Knex, id: number, owner: string, now: Date, until: Date): Promise<Lease> {
  const [results] = await db.raw(
    `UPDATE certificates SET render_lease_owner = ?, render_lease_until = ?
       WHERE id = ? AND rendered_at IS NULL AND (render_lease_owner IS NULL OR render_lease_until IS NULL OR render_lease_until < ?);
     SELECT ROW_COUNT() AS leased;
     SELECT rendered_at, template_version, IF(render_lease_owner = ?, snapshot, NULL) AS snapshot FROM certificates WHERE id = ?`,
    [owner, until, id, now, owner, id])
  const leased = Number((results as any[])[1][0].leased) === 1
  const r = (results as any[])[2][0]
  if (!r) return { state: 'missing' }
  if (leased) return { state: 'leased', templateVersion: r.template_version, snapshot: r.snapshot }
  return { state: r.rendered_at ? 'rendered' : 'busy' }
}

export async function snapshotsOf(db: Knex, ids: readonly number[]): Promise<{ id: number; templateVersion: number; snapshot: string }[]> {
  if (!ids.length) return []
  const rows = await db('certificates').whereIn('id', ids).select('id', 'template_version', 'snapshot')
  return rows.map((r: any) => ({ id: r.id, templateVersion: r.template_version, snapshot: r.snapshot }))
}

/**
 * Stores the document if `owner` still holds the lease, in one transaction with the row's hash and length; false
 * when it does not (the lease ran out and another took it).
 */
export async function storeDocument(db: Knex, id: number, owner: string, pdf: Buffer, sha256: string, now: Date): Promise<boolean> {
  return writeTransaction(db, async (trx) => {
    const [results] = await trx.raw(
      `UPDATE certificates SET sha256 = ?, byte_length = ?, rendered_at = ?, render_lease_owner = NULL, render_lease_until = NULL, render_error = NULL
         WHERE id = ? AND render_lease_owner = ? AND rendered_at IS NULL;
       INSERT INTO certificate_documents (certificate_id, pdf) SELECT ?, ? FROM DUAL WHERE ROW_COUNT() = 1`,
      [sha256, pdf.length, now, id, owner, id, pdf])
    const updated = Number((results as any[])[0].affectedRows) === 1
    const inserted = Number((results as any[])[1].affectedRows) === 1
    if (updated !== inserted) throw new Error('certificate document and its row disagree')
    return updated
  })
}

/** Records a failed render and lets the lease run until the backoff ends, so no one retries it before then. */
export async function recordRenderError(db: Knex, id: number, owner: string, message: string, backoff: (attempts: number) => Date): Promise<void> {
  const r = await db('certificates').where({ id }).first('render_attempts')
  const attempts = Number(r?.render_attempts ?? 0) + 1
  await db('certificates').where({ id, render_lease_owner: owner }).whereNull('rendered_at')
    .update({ render_error: message.slice(0, 500), render_attempts: attempts, render_lease_owner: null, render_lease_until: backoff(attempts) })
}

export async function documentBytes(db: Knex, id: number): Promise<Buffer | undefined> {
  const r = await db('certificate_documents').where({ certificate_id: id }).first('pdf')
  return r?.pdf
}

export type VerificationRow = { serial: string; partNumber: string; number: string; issuedAt: Date; status: 'valid' | 'superseded' | 'revoked'; sha256: string | null; renderedAt: Date | null }

export async function verificationByCode(db: Knex, code: string): Promise<VerificationRow | undefined> {
  const r = await db('certificates as c').join('units as u', 'u.id', 'c.unit_id').join('products as p', 'p.id', 'u.product_id')
    .where('c.verify_code', code).first('u.serial', 'p.part_number', 'c.number', 'c.issued_at', 'c.status', 'c.sha256', 'c.rendered_at')
  return r ? { serial: r.serial, partNumber: r.part_number, number: r.number, issuedAt: r.issued_at, status: r.status, sha256: r.sha256 ?? null, renderedAt: r.rendered_at ?? null } : undefined
}
