import type { Knex } from 'knex'

// Every reader here takes the caller's customer scope: a customer id, or null for staff (every customer).
// A customer sees only shipments released to it (never drafts), and only units that went out in them.
export type Scope = number | null

const SENT = ['released', 'dispatched']

function sentTo(q: Knex.QueryBuilder, scope: Scope, alias = 's') {
  q.whereIn(`${alias}.status`, SENT)
  if (scope !== null) q.andWhere(`${alias}.customer_id`, scope)
  return q
}

function likePrefix(q: string): string {
  return q.replace(/[\\%_]/g, (c) => `\\${c}`) + '%'
}

export type UnitHitRow = {
  unitId: number; serial: string; partNumber: string; productName: string; lot: string
  shipmentId: number; shipmentCode: string; customer: string; returned: boolean
}

/** Shipped units whose serial starts with the prefix, by serial then part; each with its newest shipment in scope. */
export async function searchShippedUnits(db: Knex, scope: Scope, prefix: string, limit: number, offset: number): Promise<{ rows: UnitHitRow[]; total: number }> {
  const base = () => {
    const q = db('shipment_units as su').join('shipments as s', 's.id', 'su.shipment_id').join('units as u', 'u.id', 'su.unit_id')
    sentTo(q, scope)
    if (prefix) q.andWhere('u.serial', 'like', likePrefix(prefix))
    return q
  }
  const [{ n }] = await base().countDistinct({ n: 'u.id' }) as any[]
  const total = Number(n)
  if (!total || offset >= total) return { rows: [], total }
  const page = await base().join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .groupBy('u.id', 'u.serial', 'p.part_number', 'p.name', 'l.code')
    .orderBy('u.serial').orderBy('p.part_number').limit(limit).offset(offset)
    .select('u.id', 'u.serial', 'p.part_number', 'p.name as product_name', 'l.code as lot_code')
  const ids = page.map((r: any) => Number(r.id))
  const memberships = await sentTo(db('shipment_units as su').join('shipments as s', 's.id', 'su.shipment_id')
    .join('customers as c', 'c.id', 's.customer_id'), scope)
    .whereIn('su.unit_id', ids).orderBy('su.added_at', 'desc').orderBy('s.id', 'desc')
    .select('su.unit_id', 's.id', 's.code', 'c.name as customer', 'su.returned_at')
  const newest = new Map<number, any>()
  for (const m of memberships as any[]) if (!newest.has(Number(m.unit_id))) newest.set(Number(m.unit_id), m)
  return {
    total,
    rows: page.map((r: any) => {
      const m = newest.get(Number(r.id))
      return {
        unitId: Number(r.id), serial: r.serial, partNumber: r.part_number, productName: r.product_name, lot: r.lot_code,
        shipmentId: Number(m.id), shipmentCode: m.code, customer: m.customer, returned: m.returned_at != null,
      }
    }),
  }
}

export type PortalUnitRecord = {
  id: number; serial: string; partNumber: string; productName: string; lot: string
  multiplier: number; inputHz: number; outputHz: number; steps: string[]
}

export type MembershipRow = {
  shipmentId: number; code: string; customer: string; status: string
  releasedAt: Date | null; dispatchedAt: Date | null; returnedAt: Date | null
}

/** The unit of this part and serial with its shipments in scope; undefined when it never went out in one. */
export async function visibleUnit(db: Knex, partNumber: string, serial: string, scope: Scope): Promise<{ unit: PortalUnitRecord; shipments: MembershipRow[] } | undefined> {
  const u = await db('units as u').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .where({ 'p.part_number': partNumber, 'u.serial': serial })
    .first('u.id', 'u.serial', 'p.part_number', 'p.name as product_name', 'l.code as lot_code', 'p.multiplier', 'p.input_hz', 'p.output_hz', 'p.steps')
  if (!u) return undefined
  const shipments = await sentTo(db('shipment_units as su').join('shipments as s', 's.id', 'su.shipment_id')
    .join('customers as c', 'c.id', 's.customer_id'), scope)
    .where('su.unit_id', u.id).orderBy('su.added_at').orderBy('s.id')
    .select('s.id', 's.code', 'c.name as customer', 's.status', 's.released_at', 's.dispatched_at', 'su.returned_at')
  if (!shipments.length) return undefined
  const steps = typeof u.steps === 'string' ? JSON.parse(u.steps) : u.steps
  return {
    unit: {
      id: Number(u.id), serial: u.serial, partNumber: u.part_number, productName: u.product_name, lot: u.lot_code,
      multiplier: Number(u.multiplier), inputHz: Number(u.input_hz), outputHz: Number(u.output_hz), steps,
    },
    shipments: shipments.map((s: any) => ({
      shipmentId: Number(s.id), code: s.code, customer: s.customer, status: s.status,
      releasedAt: s.released_at, dispatchedAt: s.dispatched_at, returnedAt: s.returned_at,
    })),
  }
}

/**
 * The latest run (highest attempt; attempts follow test time) at each step of the unit, among runs that started
 * no later than `until` when given.
 */
export async function latestRunIds(db: Knex, unitId: number, until: Date | null): Promise<number[]> {
  const inner = db('test_runs').where({ unit_id: unitId }).groupBy('step').select('step').max({ attempt: 'attempt' })
  if (until) inner.andWhere('started_at', '<=', until)
  const rows = await db('test_runs as r').join(inner.as('m'), function () {
    this.on('m.step', '=', 'r.step').andOn('m.attempt', '=', 'r.attempt')
  }).where('r.unit_id', unitId).select('r.id')
  return rows.map((r: any) => Number(r.id))
}

/** Key characteristics of the given revisions, as "revision|step|name|qualifier" keys. */
export async function keyCharacteristics(db: Knex, revisionIds: number[]): Promise<Set<string>> {
  if (!revisionIds.length) return new Set()
  const rows = await db('spec_limits').whereIn('revision_id', revisionIds).andWhere('key_characteristic', true)
    .select('revision_id', 'step', 'name', 'qualifier')
  return new Set(rows.map((r: any) => `${r.revision_id}|${r.step}|${r.name}|${Number(r.qualifier)}`))
}

export type CertificateRow = {
  id: number; number: string; status: 'valid' | 'superseded' | 'revoked'; issuedAt: Date; shipmentCode: string
  rendered: boolean; verifyCode: string; statusChangedAt: Date | null; statusReason: string | null; supersedes: string | null
}

/** The unit's certificates in scope, oldest first. */
export async function unitCertificates(db: Knex, unitId: number, scope: Scope): Promise<CertificateRow[]> {
  const q = db('certificates as c').join('shipments as s', 's.id', 'c.shipment_id')
    .leftJoin('certificates as prev', 'prev.id', 'c.supersedes_id')
    .where('c.unit_id', unitId).orderBy('c.issued_at').orderBy('c.id')
    .select('c.id', 'c.number', 'c.status', 'c.issued_at', 's.code as shipment_code', 'c.rendered_at', 'c.verify_code',
      'c.status_changed_at', 'c.status_reason', 'prev.number as supersedes')
  if (scope !== null) q.andWhere('c.customer_id', scope)
  return (await q).map((r: any) => ({
    id: Number(r.id), number: r.number, status: r.status, issuedAt: r.issued_at, shipmentCode: r.shipment_code,
    rendered: r.rendered_at != null, verifyCode: r.verify_code, statusChangedAt: r.status_changed_at,
    statusReason: r.status_reason, supersedes: r.supersedes,
  }))
}

/** Returns of the unit from shipments in scope. */
export async function unitReturns(db: Knex, unitId: number, scope: Scope): Promise<{ returnNumber: string; receivedAt: Date; shipmentCode: string }[]> {
  const q = db('unit_returns as r').join('shipments as s', 's.id', 'r.shipment_id').where('r.unit_id', unitId)
    .orderBy('r.received_at').select('r.return_number', 'r.received_at', 's.code')
  if (scope !== null) q.andWhere('s.customer_id', scope)
  return (await q).map((r: any) => ({ returnNumber: r.return_number, receivedAt: r.received_at, shipmentCode: r.code }))
}

// ---- exports of one shipment, read in pages so a large shipment is never held whole ----

export type ShipmentUnitRow = { unitId: number; serial: string; partNumber: string; lot: string; steps: string[]; until: Date | null }

/** Units of the shipment (returned ones too, with the moment they left it), by unit id after `afterId`. */
export async function shipmentUnitsPage(db: Knex, shipmentId: number, afterId: number, limit: number): Promise<ShipmentUnitRow[]> {
  const rows = await db('shipment_units as su').join('units as u', 'u.id', 'su.unit_id').join('products as p', 'p.id', 'u.product_id')
    .join('lots as l', 'l.id', 'u.lot_id').where('su.shipment_id', shipmentId).andWhere('u.id', '>', afterId)
    .orderBy('u.id').limit(limit).select('u.id', 'u.serial', 'p.part_number', 'p.steps', 'l.code as lot_code', 'su.returned_at')
  return rows.map((r: any) => ({
    unitId: Number(r.id), serial: r.serial, partNumber: r.part_number, lot: r.lot_code,
    steps: typeof r.steps === 'string' ? JSON.parse(r.steps) : r.steps, until: r.returned_at,
  }))
}

export type MeasuredRow = {
  unitId: number; step: string; attempt: number; startedAt: Date; name: string; qualifier: number
  value: number; unit: string; lsl: number | null; usl: number | null; verdict: 'pass' | 'fail' | 'info'
}

/** Every measurement of every run of these units, in run then measurement order. */
export async function measurementsOfUnits(db: Knex, unitIds: number[]): Promise<MeasuredRow[]> {
  if (!unitIds.length) return []
  const rows = await db('test_runs as r').join('measurements as m', 'm.run_id', 'r.id').whereIn('r.unit_id', unitIds)
    .orderBy('r.unit_id').orderBy('r.step').orderBy('r.attempt').orderBy('m.id')
    .select('r.unit_id', 'r.step', 'r.attempt', 'r.started_at', 'm.name', 'm.qualifier', 'm.value', 'm.unit', 'm.lsl', 'm.usl', 'm.verdict')
  return rows.map((r: any) => ({
    unitId: Number(r.unit_id), step: r.step, attempt: Number(r.attempt), startedAt: r.started_at, name: r.name,
    qualifier: Number(r.qualifier), value: Number(r.value), unit: r.unit, lsl: r.lsl, usl: r.usl, verdict: r.verdict,
  }))
}

export type ShipmentCertificateRow = { id: number; number: string; serial: string; issuedAt: Date; rendered: boolean }

/** The shipment's certificates in force (status valid), by id after `afterId`. */
export async function shipmentCertificatesPage(db: Knex, shipmentId: number, afterId: number, limit: number): Promise<ShipmentCertificateRow[]> {
  const rows = await db('certificates as c').join('units as u', 'u.id', 'c.unit_id')
    .where({ 'c.shipment_id': shipmentId, 'c.status': 'valid' }).andWhere('c.id', '>', afterId)
    .orderBy('c.id').limit(limit).select('c.id', 'c.number', 'u.serial', 'c.issued_at', 'c.rendered_at')
  return rows.map((r: any) => ({ id: Number(r.id), number: r.number, serial: r.serial, issuedAt: r.issued_at, rendered: r.rendered_at != null }))
}

/** How many certificates in force the shipment has, how many are rendered and their bytes. */
export async function shipmentCertificateTotals(db: Knex, shipmentId: number): Promise<{ files: number; rendered: number; bytes: number }> {
  const r = await db('certificates').where({ shipment_id: shipmentId, status: 'valid' })
    .first(db.raw('COUNT(*) AS files'), db.raw('COUNT(rendered_at) AS rendered'), db.raw('COALESCE(SUM(byte_length), 0) AS bytes')) as any
  return { files: Number(r.files), rendered: Number(r.rendered), bytes: Number(r.bytes) }
}

export async function certificateDocuments(db: Knex, certificateIds: number[]): Promise<Map<number, Buffer>> {
  if (!certificateIds.length) return new Map()
  const rows = await db('certificate_documents').whereIn('certificate_id', certificateIds).select('certificate_id', 'pdf')
  return new Map(rows.map((r: any) => [Number(r.certificate_id), r.pdf as Buffer]))
}
