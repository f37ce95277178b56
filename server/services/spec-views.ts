import type { Knex } from 'knex'
import { findProductById, findProductByPartNumber, listProductRecords, type ProductRecord } from '../database/repositories/products'
import {
  findRevision, findRevisionInForce, listAllRevisions, listLimitsOf, listRevisionsOfProduct, type RevisionRecord,
} from '../database/repositories/spec-revisions'
import { compareSpecLimits } from '../../shared/utils/spec-limits'
import type { ProductRevisions, RevisionComparison, RevisionDetail, SpecOverviewProduct, SpecProduct, SpecRevision } from '../../shared/types/spec'
import { RuleError } from './rule-error'

const iso = (d: Date) => new Date(d).toISOString()
const isoOrNull = (d: Date | null) => (d ? iso(d) : null)

function productView(p: ProductRecord): SpecProduct {
  return {
    id: p.id, partNumber: p.partNumber, name: p.name, multiplier: p.multiplier, inputHz: p.inputHz, outputHz: p.outputHz,
    steps: p.steps, jitterBandLoHz: p.jitterBandLoHz, jitterBandHiHz: p.jitterBandHiHz, updatedAt: iso(p.updatedAt),
  }
}

/** A revision's place in time: in force now, approved but still to take effect, or neither. */
function revisionView(r: RevisionRecord, inForceId: number | undefined, now: Date): SpecRevision {
  const pending = r.status !== 'draft' && !!r.effectiveAt && r.effectiveAt > now
  return {
    ...r, effectiveAt: isoOrNull(r.effectiveAt), approvedAt: isoOrNull(r.approvedAt), createdAt: iso(r.createdAt),
    submittedAt: isoOrNull(r.submittedAt), discardedAt: isoOrNull(r.discardedAt),
    inForce: r.id === inForceId, pending,
  }
}

export async function productRevisions(db: Knex, partNumber: string, now = new Date()): Promise<ProductRevisions | undefined> {
  const product = await findProductByPartNumber(db, partNumber)
  if (!product) return undefined
  const inForce = await findRevisionInForce(db, product.id, now)
  const revisions = await listRevisionsOfProduct(db, product.id)
  return { product: productView(product), revisions: revisions.map((r) => revisionView(r, inForce?.id, now)) }
}

export async function revisionDetail(db: Knex, id: number, now = new Date()): Promise<RevisionDetail | undefined> {
  const revision = await findRevision(db, id)
  if (!revision) return undefined
  const product = (await findProductById(db, revision.productId))!
  const inForce = await findRevisionInForce(db, product.id, now)
  return { revision: revisionView(revision, inForce?.id, now), product: productView(product), limits: await listLimitsOf(db, id) }
}

/** Every product with the revision in force, the approved ones still to take effect, and open drafts. */
export async function specOverview(db: Knex, now = new Date()): Promise<SpecOverviewProduct[]> {
  const [products, revisions] = await Promise.all([listProductRecords(db), listAllRevisions(db)])
  return Promise.all(products.map(async (p) => {
    const inForce = await findRevisionInForce(db, p.id, now)
    const mine = revisions.filter((r) => r.productId === p.id).map((r) => revisionView(r, inForce?.id, now))
    return {
      ...productView(p),
      inForce: mine.find((r) => r.inForce) ?? null,
      pending: mine.filter((r) => r.pending),
      drafts: mine.filter((r) => r.status === 'draft'),
      revisionCount: mine.length,
    }
  }))
}

export async function compareRevisions(db: Knex, fromId: number, toId: number): Promise<RevisionComparison> {
  const [from, to] = await Promise.all([findRevision(db, fromId), findRevision(db, toId)])
  if (!from || !to) throw new RuleError(404, 'No such revision.')
  if (from.productId !== to.productId) throw new RuleError(422, 'Only revisions of the same product can be compared.')
  const [a, b] = await Promise.all([listLimitsOf(db, fromId), listLimitsOf(db, toId)])
  const brief = (r: RevisionRecord) => ({ id: r.id, revision: r.revision, status: r.status, effectiveAt: isoOrNull(r.effectiveAt) })
  return { partNumber: from.partNumber, from: brief(from), to: brief(to), ...compareSpecLimits(a, b) }
}
