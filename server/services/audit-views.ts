import type { Knex } from 'knex'
import type { AuditEntry, AuditPage, AuditSubject } from '../../shared/types/audit'
import { auditKind } from '../../shared/utils/audit-kinds'
import { auditFacets, listAudit, type AuditFilter, type AuditRow } from '../database/repositories/audit-log'
import { auditSubjectRows, type SubjectRow } from '../database/repositories/audit-subjects'
import { parameterLabel } from '../../shared/utils/value-format'

const SETTINGS: Record<string, { name: string; href: string }> = {
  calibration_due_soon_days: { name: 'Calibration due-soon warning', href: '/stations' },
}

const enc = encodeURIComponent
const unitHref = (partNumber: string, serial: string) => `/units/${enc(serial)}?part=${enc(partNumber)}`

/** Where each kind's page is, given the entry's id and what was read about it; null where no page shows it. */
const HREF: Record<string, (id: string, row: SubjectRow) => string | null> = {
  spec_revision: (id) => `/specs/revisions/${id}`,
  product: (id) => `/specs/${enc(id)}`,
  lot: (id) => `/lots/${enc(id)}`,
  test_run: (_id, row) => { const [part, serial] = String(row.link).split('/'); return unitHref(part!, serial!) },
  station: (id) => `/stations/${id}`,
  calibration_impact: (id) => `/calibration-impacts/${id}`,
  certificate: (_id, row) => (row.link ? `/shipments/${row.link}` : null),
  shipment: (_id, row) => `/shipments/${row.link}`,
  customer: () => '/customers',
  user: () => '/admin/users',
  alert_rule: () => '/alerts/rules',
  alert_firing: () => '/alerts',
  import_job: () => '/imports',
}

/** Kinds whose id names them by itself (a unit, a control baseline, a setting, a range of runs): no lookup needed. */
function fromId(entity: string, id: string): AuditSubject | undefined {
  const kind = auditKind(entity)
  if (entity === 'unit') {
    const [part, serial] = id.split('/')
    return serial ? { kind, name: `${part} ${serial}`, detail: null, href: unitHref(part!, serial) } : undefined
  }
  if (entity === 'control_baseline') {
    const [code, step, name, qualifier] = id.split('/')
    return name ? { kind, name: code!, detail: `${parameterLabel(name, Number(qualifier) || 0)}, ${step}`, href: `/lots/${enc(code!)}` } : undefined
  }
  if (entity === 'app_setting' && SETTINGS[id]) return { kind, ...SETTINGS[id]!, detail: null }
  if (entity === 'test_run' && id.includes('…')) return { kind: 'Test runs', name: id.replace('…', ' to '), detail: null, href: null }
  return undefined
}

/** Each entry's subject named as its page names it, read for the whole page at once. */
async function subjectsOf(db: Knex, rows: AuditRow[]): Promise<AuditSubject[]> {
  const wanted = new Map<string, string[]>()
  for (const r of rows) if (!fromId(r.entity, r.entityId)) wanted.set(r.entity, [...(wanted.get(r.entity) ?? []), r.entityId])
  const found = await auditSubjectRows(db, wanted)
  return rows.map((r) => {
    const own = fromId(r.entity, r.entityId)
    if (own) return own
    const row = found.get(r.entity)?.get(r.entityId)
    const kind = auditKind(r.entity)
    // gone since (or never a row of its own): the stored id is all there is to show
    if (!row) return { kind, name: r.entityId, detail: null, href: null }
    return { kind, name: row.name, detail: row.detail ?? null, href: HREF[r.entity]?.(r.entityId, row) ?? null }
  })
}

/** One page of the audit log under a filter (parsed from the query by server/utils/audit-query.ts), with the facets to filter by. */
export async function auditPage(db: Knex, { filter, page, pageSize }: { filter: AuditFilter; page: number; pageSize: number }): Promise<AuditPage> {
  const { total, rows } = await listAudit(db, filter, { limit: pageSize, offset: (page - 1) * pageSize })
  const [subjects, facets] = await Promise.all([subjectsOf(db, rows), auditFacets(db)])
  const entries: AuditEntry[] = rows.map((r, i) => ({ ...r, at: new Date(r.at).toISOString(), subject: subjects[i]! }))
  return { page, pageSize, total, pageCount: Math.max(1, Math.ceil(total / pageSize)), entries, facets }
}
