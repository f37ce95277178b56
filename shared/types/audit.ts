// The audit log as the /audit page reads it (GET /api/audit).

export type AuditPerson = { id: number; name: string; email: string }

/** The thing an entry is about, named as its own page names it, with a link to that page where there is one. */
export type AuditSubject = { kind: string; name: string; detail: string | null; href: string | null }

export type AuditEntry = {
  id: number; at: string; user: AuditPerson | null; station: { id: number; name: string } | null
  action: string; entity: string; entityId: string; subject: AuditSubject; before: unknown; after: unknown
}

export type AuditFacets = { entities: string[]; actions: string[]; users: AuditPerson[] }

export type AuditPage = { page: number; pageSize: number; total: number; pageCount: number; entries: AuditEntry[]; facets: AuditFacets }
