// Rendering issued certificates into stored documents: in the background for every new certificate, and on demand
// for a download that arrives first. Rendering happens outside any transaction; the lease on the row decides who
// stores. The stored bytes are the record: they are never rendered again.
import { createHash, randomBytes } from 'node:crypto'
import { hostname } from 'node:os'
import type { Knex } from 'knex'
import type { CertificateSnapshot } from '../../../shared/types/certificate'
import { leaseOne, leaseUnrendered, recordRenderError, snapshotsOf, storeDocument } from '../../database/repositories/certificate-documents'
import type { CertificateFonts } from './fonts'
import { renderCertificate } from './render-pdf'
import { RetryLater } from '../rule-error'

const LEASE_MS = 30_000
// an on-demand request waits this long for another process's render before answering 503
const WAIT_MS = 15_000

const processOwner = `${hostname().slice(0, 30)}:${process.pid}:${randomBytes(4).toString('hex')}`
let leases = 0
/** Each render has its own owner name, so two renders in one process never take each other's lease for their own. */
function newOwner(): string {
  return `${processOwner}:${++leases}`.slice(0, 64)
}

/** Seconds until a failed render is tried again in the background: 10 s doubling per attempt, at most an hour. */
export function renderBackoffMs(attempts: number): number {
  return Math.min(3_600_000, 10_000 * 2 ** Math.max(0, attempts - 1))
}

export type StoredDocument = { pdf: Buffer; sha256: string }

/** Renders a leased certificate and stores it; the document when this owner stored it, else null. */
async function renderAndStore(db: Knex, id: number, owner: string, fonts: CertificateFonts, leased?: { templateVersion: number; snapshot: string }): Promise<StoredDocument | null> {
  const row = leased ?? (await snapshotsOf(db, [id]))[0]
  if (!row) return null
  let pdf: Buffer
  try {
    pdf = await renderCertificate(JSON.parse(row.snapshot) as CertificateSnapshot, row.templateVersion, fonts)
  } catch (e) {
    await recordRenderError(db, id, owner, String((e as Error)?.message ?? e), (n) => new Date(Date.now() + renderBackoffMs(n)))
    throw e
  }
  const sha256 = createHash('sha256').update(pdf).digest('hex')
  return (await storeDocument(db, id, owner, pdf, sha256, new Date())) ? { pdf, sha256 } : null
}

/** Renders up to `limit` certificates that wait for their document; returns how many it stored. */
export async function renderPending(db: Knex, fonts: CertificateFonts, limit = 8): Promise<number> {
  const owner = newOwner()
  const now = new Date()
  const ids = await leaseUnrendered(db, owner, now, new Date(now.getTime() + LEASE_MS), limit)
  let stored = 0
  for (const id of ids) {
    try {
      if (await renderAndStore(db, id, owner, fonts)) stored++
    } catch { /* recorded on the row; the others go on */ }
  }
  return stored
}

export class RenderUnavailable extends RetryLater {}

/**
 * Makes sure the certificate's document is stored: renders it now unless it is stored already, or waits for the
 * render another process holds the lease of. Returns the document when this call stored it, null when another did.
 */
export async function ensureRendered(db: Knex, id: number, fonts: CertificateFonts): Promise<StoredDocument | null> {
  const deadline = Date.now() + WAIT_MS
  for (let wait = 20; ; wait = Math.min(wait * 2, 250)) {
    const owner = newOwner()
    const now = new Date()
    const lease = await leaseOne(db, id, owner, now, new Date(now.getTime() + LEASE_MS))
    if (lease.state === 'rendered') return null
    if (lease.state === 'missing') throw new Error(`certificate ${id} does not exist`)
    if (lease.state === 'leased') {
      const stored = await renderAndStore(db, id, owner, fonts, { templateVersion: lease.templateVersion!, snapshot: lease.snapshot! })
      if (stored) return stored
      continue // stored by another whose lease we outlived: the next look says so
    }
    if (Date.now() > deadline) throw new RenderUnavailable('The certificate document is being prepared; retry shortly.')
    await new Promise((r) => setTimeout(r, wait))
  }
}

/** Renders, one after another, those of the certificates that have no stored document yet (a ZIP's next page). */
export async function ensureAllRendered(db: Knex, ids: readonly number[], fonts: CertificateFonts): Promise<void> {
  for (const id of ids) await ensureRendered(db, id, fonts)
}
