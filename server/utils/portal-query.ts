import { problem } from './problem'

const PREFIX = /^[A-Za-z0-9._-]{0,64}$/
export const MAX_PORTAL_PAGE_SIZE = 100

export type PortalUnitQuery = { q: string; page: number; pageSize: number }

function positive(raw: unknown, name: string, fallback: number, max: number): number {
  if (raw === undefined || raw === '') return fallback
  const n = Number(raw)
  if (typeof raw !== 'string' || !/^\d{1,6}$/.test(raw) || n < 1 || n > max) {
    throw problem(400, `${name} must be a whole number from 1 to ${max}.`, { errors: [{ pointer: `/${name}`, message: `must be 1 to ${max}` }] })
  }
  return n
}

/** ?q (the start of a serial; empty for every one), page, pageSize. */
export function parsePortalUnitQuery(query: Record<string, unknown>): PortalUnitQuery {
  const q = typeof query.q === 'string' ? query.q.trim() : query.q === undefined ? '' : null
  if (q === null || !PREFIX.test(q)) {
    throw problem(400, 'q is the start of a serial: up to 64 letters, digits, dots, dashes or underscores.', { errors: [{ pointer: '/q', message: 'must be up to 64 of A-Z a-z 0-9 . _ -' }] })
  }
  return { q, page: positive(query.page, 'page', 1, 100_000), pageSize: positive(query.pageSize, 'pageSize', 25, MAX_PORTAL_PAGE_SIZE) }
}
