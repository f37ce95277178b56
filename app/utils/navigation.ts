import type { Role } from '#shared/utils/roles'

export type NavItem = { to: string; label: string; roles: Role[] }

export const NAV_ITEMS: NavItem[] = [
  { to: '/floor', label: 'Floor', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { to: '/lots', label: 'Lots', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { to: '/units', label: 'Units', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { to: '/trends', label: 'Trends', roles: ['admin', 'quality', 'engineer'] },
  { to: '/stations', label: 'Stations', roles: ['admin', 'engineer'] },
  { to: '/specs', label: 'Specs', roles: ['admin', 'quality', 'engineer'] },
  { to: '/calibration-impacts', label: 'Cal. impact', roles: ['admin', 'quality', 'engineer'] },
  { to: '/shipments', label: 'Shipments', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { to: '/alerts', label: 'Alerts', roles: ['admin', 'quality', 'engineer', 'operator'] },
  { to: '/customers', label: 'Customers', roles: ['admin', 'quality'] },
  { to: '/imports', label: 'Imports', roles: ['admin', 'engineer'] },
  { to: '/audit', label: 'Audit', roles: ['admin', 'quality'] },
  { to: '/admin/users', label: 'Users', roles: ['admin'] },
  { to: '/admin/outbox', label: 'Outbox', roles: ['admin'] },
  { to: '/portal', label: 'Shipments', roles: ['customer'] },
]

export function navFor(role: Role | undefined): NavItem[] {
  return role ? NAV_ITEMS.filter((i) => i.roles.includes(role)) : []
}
