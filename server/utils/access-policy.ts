import type { Role } from '../../shared/utils/roles'

export type Caller = Role | 'station'
export type Rule = { method: string; path: string; allow: 'public' | Caller[] }

const STAFF: Caller[] = ['admin', 'quality', 'engineer', 'operator']
const ENGINEERING: Caller[] = ['admin', 'quality', 'engineer']
/** who prepares shipments; releasing one stays with quality */
const SHIPPING: Caller[] = ['admin', 'quality']

/**
 * Every API route and who may call it. A route not listed here answers 404 to everyone:
 * access is denied by default, and the route × role test fails for a handler missing from this list.
 */
export const API_POLICY: Rule[] = [
  { method: 'GET', path: '/api/health', allow: 'public' },
  { method: 'POST', path: '/api/auth/login', allow: 'public' },
  // the session as the app reads it; signing out goes through /api/auth/sign-out, which sets the cookie's flags
  { method: 'GET', path: '/api/_auth/session', allow: 'public' },
  { method: 'POST', path: '/api/auth/sign-out', allow: 'public' },
  { method: 'GET', path: '/api/me', allow: [...STAFF, 'customer'] },
  { method: 'POST', path: '/api/me/password', allow: [...STAFF, 'customer'] },
  { method: 'POST', path: '/api/me/sign-out-everywhere', allow: [...STAFF, 'customer'] },
  // a forgotten password: the same answer for any address, limited per client and per address
  { method: 'POST', path: '/api/auth/password-reset', allow: 'public' },
  { method: 'POST', path: '/api/auth/password-reset/confirm', allow: 'public' },
  // the customer portal's reads: a customer within its own shipments (others' ids answer 404), staff across all
  { method: 'GET', path: '/api/portal/units', allow: [...STAFF, 'customer'] },
  { method: 'GET', path: '/api/portal/units/:partNumber/:serial', allow: [...STAFF, 'customer'] },
  { method: 'GET', path: '/api/shipments/:id/certificates.zip', allow: [...STAFF, 'customer'] },
  { method: 'GET', path: '/api/shipments/:id/measurements.csv', allow: [...STAFF, 'customer'] },
  // a customer reads only its own customer's certificates (404 for any other number)
  { method: 'GET', path: '/api/certificates/:number.pdf', allow: [...STAFF, 'customer'] },
  { method: 'GET', path: '/api/certificate-notices', allow: ['admin', 'quality'] },
  { method: 'GET', path: '/api/verify/:code', allow: 'public' },

  { method: 'GET', path: '/api/users', allow: ['admin'] },
  { method: 'GET', path: '/api/admin/outbox', allow: ['admin'] },
  { method: 'GET', path: '/api/admin/outbox/received', allow: ['admin'] },
  { method: 'POST', path: '/api/users', allow: ['admin'] },
  { method: 'PATCH', path: '/api/users/:id', allow: ['admin'] },
  { method: 'GET', path: '/api/customers', allow: ['admin', 'quality'] },
  { method: 'POST', path: '/api/customers', allow: ['admin', 'quality'] },
  { method: 'GET', path: '/api/customers/:id', allow: ['admin', 'quality'] },
  { method: 'PATCH', path: '/api/customers/:id', allow: ['admin', 'quality'] },
  { method: 'POST', path: '/api/customers/:id/contacts', allow: ['admin', 'quality'] },
  { method: 'PATCH', path: '/api/customers/:id/contacts/:contactId', allow: ['admin', 'quality'] },
  { method: 'DELETE', path: '/api/customers/:id/contacts/:contactId', allow: ['admin', 'quality'] },

  // a customer user reads its own released and dispatched shipments; the handlers scope by account
  { method: 'GET', path: '/api/shipments', allow: [...STAFF, 'customer'] },
  { method: 'GET', path: '/api/shipments/:id', allow: [...STAFF, 'customer'] },
  { method: 'POST', path: '/api/shipments', allow: SHIPPING },
  { method: 'PATCH', path: '/api/shipments/:id', allow: SHIPPING },
  { method: 'POST', path: '/api/shipments/:id/serials/preview', allow: SHIPPING },
  { method: 'POST', path: '/api/shipments/:id/serials', allow: SHIPPING },
  { method: 'DELETE', path: '/api/shipments/:id/serials', allow: SHIPPING },
  { method: 'POST', path: '/api/shipments/:id/release', allow: ['quality'] },
  { method: 'POST', path: '/api/shipments/:id/dispatch', allow: SHIPPING },
  { method: 'POST', path: '/api/shipments/:id/returns', allow: SHIPPING },
  { method: 'POST', path: '/api/certificates/:number/revoke', allow: ['quality'] },
  { method: 'POST', path: '/api/certificates/:number/reissue', allow: ['quality'] },
  { method: 'GET', path: '/api/products/:partNumber/retest-policy', allow: ENGINEERING },
  { method: 'PUT', path: '/api/products/:partNumber/retest-policy', allow: ENGINEERING },
  // engineering and trial lots: the product's code patterns and a lot's mark by hand
  { method: 'GET', path: '/api/products/:partNumber/engineering-pattern', allow: ENGINEERING },
  { method: 'PUT', path: '/api/products/:partNumber/engineering-pattern', allow: ENGINEERING },
  { method: 'PUT', path: '/api/lots/:code/engineering', allow: ENGINEERING },
  { method: 'POST', path: '/api/units/:partNumber/:serial/dispositions', allow: ['quality'] },

  { method: 'GET', path: '/api/lots', allow: STAFF },
  { method: 'GET', path: '/api/units/:serial', allow: STAFF },
  // the header's type-ahead over serials, lots and parts: internal records, so staff only
  { method: 'GET', path: '/api/search', allow: STAFF },

  { method: 'GET', path: '/api/stations', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/stations', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/stations/:id', allow: ['admin', 'engineer'] },
  { method: 'PUT', path: '/api/stations/:id/owner', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/stations/owner-candidates', allow: ['admin', 'engineer'] },
  // run-time settings: every staff role reads them (the due-soon period behind the calibration badges); admins change them
  { method: 'GET', path: '/api/settings', allow: STAFF },
  { method: 'PUT', path: '/api/settings/calibration-due-soon-days', allow: ['admin'] },
  { method: 'PUT', path: '/api/settings/plant-time-zone', allow: ['admin'] },
  // the plant's time zone, which every page (the sign-in and public verification pages too) shows times in
  { method: 'GET', path: '/api/plant-time', allow: 'public' },
  { method: 'POST', path: '/api/stations/:id/token', allow: ['admin', 'engineer'] },
  { method: 'DELETE', path: '/api/stations/:id/token', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/stations/:id/calibration', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/stations/:id/runs', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/instruments', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/instruments', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/instruments/:id/moves', allow: ['admin', 'engineer'] },
  { method: 'PATCH', path: '/api/instruments/:id/holdings/:holdingId', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/instruments/:id/calibrations', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/calibrations/:id/supersede', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/calibrations/:id/certificate', allow: ['admin', 'engineer'] },
  // reviews of what an instrument found out of tolerance measured: quality and admin decide and notify, engineers read
  { method: 'GET', path: '/api/calibration-impacts', allow: ENGINEERING },
  { method: 'GET', path: '/api/calibration-impacts/:id', allow: ENGINEERING },
  { method: 'POST', path: '/api/calibration-impacts/:id/decisions', allow: SHIPPING },
  { method: 'POST', path: '/api/calibration-impacts/:id/notices', allow: SHIPPING },
  { method: 'POST', path: '/api/calibration-impacts/:id/close', allow: SHIPPING },

  { method: 'GET', path: '/api/lots/:code/summary', allow: STAFF },
  { method: 'GET', path: '/api/lots/:code/parameters/:name', allow: STAFF },
  { method: 'PUT', path: '/api/lots/:code/parameters/:name/baseline', allow: ['admin', 'engineer'] },
  { method: 'DELETE', path: '/api/lots/:code/parameters/:name/baseline', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/lots/:code/phase-noise', allow: STAFF },
  { method: 'GET', path: '/api/trends', allow: STAFF },
  { method: 'GET', path: '/api/stations/compare', allow: STAFF },
  { method: 'GET', path: '/api/floor/snapshot', allow: STAFF },
  { method: 'GET', path: '/api/floor/stream', allow: STAFF },
  { method: 'GET', path: '/api/floor/runs/:id', allow: STAFF },

  { method: 'POST', path: '/api/v1/runs', allow: ['station'] },
  { method: 'POST', path: '/api/v1/runs/batch', allow: ['station'] },
  { method: 'GET', path: '/api/v1/schema/run.json', allow: 'public' },
  { method: 'GET', path: '/api/products', allow: [...STAFF, 'station'] },
  { method: 'GET', path: '/api/products/:partNumber/spec', allow: [...STAFF, 'station'] },

  { method: 'POST', path: '/api/products', allow: ['admin', 'engineer'] },
  { method: 'PATCH', path: '/api/products/:partNumber', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/products/:partNumber/revisions', allow: ENGINEERING },
  { method: 'POST', path: '/api/products/:partNumber/revisions', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/specs', allow: ENGINEERING },
  { method: 'GET', path: '/api/revisions/:id', allow: ENGINEERING },
  { method: 'PUT', path: '/api/revisions/:id/limits', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/revisions/:id/limits.csv', allow: ENGINEERING },
  { method: 'POST', path: '/api/revisions/:id/limits/import', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/revisions/:id/approve', allow: ['quality'] },
  // the draft's author or an administrator submits it; its author (engineer), an administrator or quality may discard it
  { method: 'POST', path: '/api/revisions/:id/submit', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/revisions/:id/discard', allow: ENGINEERING },
  { method: 'GET', path: '/api/specs/awaiting-approval', allow: ['quality'] },
  { method: 'GET', path: '/api/specs/reviewers', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/revisions/:id/compare/:other', allow: ENGINEERING },

  { method: 'GET', path: '/api/lots/:code', allow: STAFF },
  { method: 'GET', path: '/api/lots/:code/units', allow: STAFF },
  { method: 'GET', path: '/api/lots/:code/units.csv', allow: STAFF },
  { method: 'POST', path: '/api/lots/:code/hold', allow: ['engineer', 'quality'] },
  { method: 'POST', path: '/api/lots/:code/resume', allow: ['engineer', 'quality'] },
  { method: 'POST', path: '/api/lots/:code/release', allow: ['quality'] },

  { method: 'GET', path: '/api/audit', allow: ['admin', 'quality'] },

  // alert rules: every staff role reads them, engineering staff edit them; firings and one's own subscriptions for all staff
  { method: 'GET', path: '/api/alert-rules', allow: STAFF },
  { method: 'POST', path: '/api/alert-rules', allow: ENGINEERING },
  { method: 'PATCH', path: '/api/alert-rules/:id', allow: ENGINEERING },
  { method: 'DELETE', path: '/api/alert-rules/:id', allow: ENGINEERING },
  { method: 'GET', path: '/api/alerts', allow: STAFF },
  { method: 'GET', path: '/api/alerts/count', allow: STAFF },
  { method: 'POST', path: '/api/alerts/:id/acknowledge', allow: STAFF },
  { method: 'POST', path: '/api/alerts/:id/comments', allow: STAFF },
  { method: 'GET', path: '/api/me/alert-subscriptions', allow: STAFF },
  { method: 'POST', path: '/api/me/alert-subscriptions', allow: STAFF },
  { method: 'DELETE', path: '/api/me/alert-subscriptions/:id', allow: STAFF },

  { method: 'GET', path: '/api/imports', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/imports', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/imports/:id', allow: ['admin', 'engineer'] },
  { method: 'GET', path: '/api/imports/:id/rejections.csv', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/imports/:id/cancel', allow: ['admin', 'engineer'] },
  { method: 'POST', path: '/api/imports/:id/resume', allow: ['admin', 'engineer'] },
]

export { STAFF as STAFF_CALLERS, ENGINEERING as ENGINEERING_CALLERS }

type Compiled = Rule & { re: RegExp }
let compiled: Compiled[] | undefined

function compile(): Compiled[] {
  return API_POLICY.map((r) => ({
    ...r,
    re: new RegExp('^' + r.path.replace(/[.*+?^${}()|[\]\\]/g, '\\$&').replace(/:[a-zA-Z]+/g, '[^/]+') + '/?$'),
  }))
}

/** The rule for a request; literal segments win over parameters. */
export function findRule(method: string, pathname: string): Rule | undefined {
  compiled ??= compile()
  const m = method === 'HEAD' ? 'GET' : method
  const hits = compiled.filter((r) => r.method === m && r.re.test(pathname))
  hits.sort((a, b) => (a.path.split(':').length - b.path.split(':').length))
  return hits[0]
}

export function pathKnown(pathname: string): boolean {
  compiled ??= compile()
  return compiled.some((r) => r.re.test(pathname))
}
