// Real values for the parameters of API routes, read from the test database, so that generated requests reach past
// the 404 of an unknown id into the handler's own checks.
import type { Knex } from 'knex'
import { API_POLICY, type Caller } from '../../server/utils/access-policy'

/** SQL giving one row with a column named after each parameter, per route prefix (the first that matches wins). */
const SOURCES: { prefix: string; sql: string }[] = [
  { prefix: '/api/alert-rules/:id', sql: 'SELECT id FROM alert_rules ORDER BY id LIMIT 1' },
  { prefix: '/api/alerts/:id', sql: 'SELECT id FROM alert_firings ORDER BY id LIMIT 1' },
  { prefix: '/api/calibration-impacts/:id', sql: 'SELECT id FROM calibration_impacts ORDER BY id LIMIT 1' },
  { prefix: '/api/calibrations/:id', sql: 'SELECT id FROM calibration_records ORDER BY id LIMIT 1' },
  { prefix: '/api/certificates/:number', sql: 'SELECT number FROM certificates ORDER BY id LIMIT 1' },
  { prefix: '/api/customers/:id/contacts/:contactId', sql: 'SELECT customer_id AS id, id AS contactId FROM customer_contacts ORDER BY id LIMIT 1' },
  { prefix: '/api/customers/:id', sql: 'SELECT id FROM customers ORDER BY id LIMIT 1' },
  { prefix: '/api/floor/runs/:id', sql: 'SELECT id FROM test_runs ORDER BY id LIMIT 1' },
  { prefix: '/api/imports/:id', sql: 'SELECT id FROM import_jobs ORDER BY started_at LIMIT 1' },
  { prefix: '/api/instruments/:id/holdings/:holdingId', sql: 'SELECT instrument_id AS id, id AS holdingId FROM instrument_holdings ORDER BY id LIMIT 1' },
  { prefix: '/api/instruments/:id', sql: 'SELECT id FROM instruments ORDER BY id LIMIT 1' },
  { prefix: '/api/lots/:code/parameters/:name', sql: "SELECT code, 'output_power' AS name FROM lots ORDER BY id LIMIT 1" },
  { prefix: '/api/lots/:code', sql: 'SELECT code FROM lots ORDER BY id LIMIT 1' },
  { prefix: '/api/me/alert-subscriptions/:id', sql: 'SELECT id FROM alert_subscriptions ORDER BY id LIMIT 1' },
  { prefix: '/api/portal/units/:partNumber/:serial', sql: 'SELECT p.part_number AS partNumber, u.serial FROM shipment_units su JOIN units u ON u.id = su.unit_id JOIN products p ON p.id = u.product_id ORDER BY su.unit_id LIMIT 1' },
  { prefix: '/api/products/:partNumber', sql: 'SELECT part_number AS partNumber FROM products ORDER BY id LIMIT 1' },
  { prefix: '/api/revisions/:id/compare/:other', sql: 'SELECT a.id, b.id AS other FROM spec_revisions a JOIN spec_revisions b ON b.id <> a.id ORDER BY a.id, b.id LIMIT 1' },
  { prefix: '/api/revisions/:id', sql: 'SELECT id FROM spec_revisions ORDER BY id LIMIT 1' },
  { prefix: '/api/shipments/:id', sql: 'SELECT id FROM shipments ORDER BY id LIMIT 1' },
  { prefix: '/api/stations/:id', sql: 'SELECT id FROM stations ORDER BY id LIMIT 1' },
  { prefix: '/api/units/:partNumber/:serial', sql: 'SELECT p.part_number AS partNumber, u.serial FROM units u JOIN products p ON p.id = u.product_id ORDER BY u.id LIMIT 1' },
  { prefix: '/api/units/:serial', sql: 'SELECT serial FROM units ORDER BY id LIMIT 1' },
  { prefix: '/api/users/:id', sql: 'SELECT id FROM users ORDER BY id LIMIT 1' },
  { prefix: '/api/verify/:code', sql: 'SELECT verify_code AS code FROM certificates ORDER BY id LIMIT 1' },
]

/** A value for an id that names nothing, used when the table is empty (the handler's 404 is then what is checked). */
const NOTHING = '987654321'

/**
 * The route's path with each `:param` replaced by a real value; throws for a route with parameters no source
 * covers, so a new route with parameters fails the suite until it is given one.
 */
export async function concretePath(db: Knex, route: string): Promise<string> {
  const params = [...route.matchAll(/:([A-Za-z]+)/g)].map((m) => m[1]!)
  if (params.length === 0) return route
  const source = SOURCES.find((s) => route.startsWith(s.prefix))
  if (!source) throw new Error(`No source of real values for the parameters of ${route}: add one to tests/support/route-ids.ts`)
  const [[row]] = await db.raw(source.sql) as [Record<string, unknown>[]]
  return route.replace(/:([A-Za-z]+)/g, (_m, name: string) => {
    const v = row?.[name]
    if (row && v === undefined) throw new Error(`The source for ${route} gives no column ${name}`)
    return encodeURIComponent(String(v ?? NOTHING))
  })
}

/** Who may call the route (admin when allowed, else the first role the policy names); undefined for public routes. */
export function callerFor(method: string, route: string): Exclude<Caller, 'station'> | undefined | 'station' {
  const rule = API_POLICY.find((r) => r.method === method && r.path === route)
  if (!rule) throw new Error(`${method} ${route} is not in API_POLICY`)
  if (rule.allow === 'public') return undefined
  if (rule.allow.includes('admin')) return 'admin'
  return rule.allow[0]
}
