export const ROLES = ['admin', 'quality', 'engineer', 'operator', 'customer'] as const
export type Role = (typeof ROLES)[number]

export const STAFF: Role[] = ['admin', 'quality', 'engineer', 'operator']
export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Administrator',
  quality: 'Quality engineer',
  engineer: 'Test engineer',
  operator: 'Floor operator',
  customer: 'Customer',
}

/** Where each role lands after signing in. */
export const LANDING: Record<Role, string> = {
  admin: '/admin/users',
  quality: '/lots',
  engineer: '/lots',
  operator: '/floor',
  customer: '/portal',
}

/** Pages anyone opens without signing in (a certificate's public check, a forgotten password). */
export const PUBLIC_PAGES = ['/verify', '/forgot-password', '/reset-password']

export function isPublicPage(path: string): boolean {
  return PUBLIC_PAGES.some((p) => path === p || path.startsWith(p + '/'))
}

/** Pages by path prefix and the roles that may open them; anything not listed is staff-only. */
export const PAGE_ACCESS: { prefix: string; roles: Role[] }[] = [
  { prefix: '/verify', roles: [...ROLES] },
  { prefix: '/forgot-password', roles: [...ROLES] },
  { prefix: '/reset-password', roles: [...ROLES] },
  // one's own account (password) for every role
  { prefix: '/account', roles: [...ROLES] },
  { prefix: '/admin', roles: ['admin'] },
  // the customer portal; staff open it too, to see what a customer sees
  { prefix: '/portal', roles: ['customer', 'admin', 'quality', 'engineer', 'operator'] },
  { prefix: '/floor', roles: ['admin', 'quality', 'engineer', 'operator'] },
  // alerts and their rules: every staff role reads and follows; the rule editor shows for engineering staff
  { prefix: '/alerts', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { prefix: '/stations/compare', roles: ['admin', 'quality', 'engineer'] },
  { prefix: '/stations', roles: ['admin', 'engineer'] },
  { prefix: '/imports', roles: ['admin', 'engineer'] },
  { prefix: '/specs', roles: ['admin', 'quality', 'engineer'] },
  { prefix: '/calibration-impacts', roles: ['admin', 'quality', 'engineer'] },
  { prefix: '/audit', roles: ['admin', 'quality'] },
  { prefix: '/customers', roles: ['admin', 'quality'] },
  { prefix: '/', roles: ['admin', 'quality', 'engineer', 'operator'] },
]

export function canOpenPage(role: Role, path: string): boolean {
  const entry = PAGE_ACCESS.find((p) => path === p.prefix || path.startsWith(p.prefix === '/' ? '/' : p.prefix + '/') || (p.prefix !== '/' && path === p.prefix))
  return !!entry && entry.roles.includes(role)
}
