import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { apiRoutesFromFiles } from '../support/route-files'
import { API_POLICY } from '../../server/utils/access-policy'

type Who = 'admin' | 'quality' | 'engineer' | 'operator' | 'customer'
const ALL: Who[] = ['admin', 'quality', 'engineer', 'operator', 'customer']
const STAFF: Who[] = ['admin', 'quality', 'engineer', 'operator']

/**
 * The expected access of every API route, written out independently of the server's policy table.
 * `sample` is a concrete path to call; a body-less call to an allowed write must stop at validation.
 */
const MATRIX: { route: string; sample?: string; allow: Who[] | 'public' }[] = [
  { route: 'GET /api/health', allow: 'public' },
  { route: 'POST /api/auth/login', allow: 'public' },
  { route: 'GET /api/me', allow: ALL },
  { route: 'POST /api/me/password', allow: ALL },
  { route: 'POST /api/auth/sign-out', allow: 'public' },
  { route: 'POST /api/me/sign-out-everywhere', allow: ALL },
  { route: 'POST /api/auth/password-reset', allow: 'public' },
  { route: 'POST /api/auth/password-reset/confirm', allow: 'public' },
  { route: 'GET /api/portal/units', allow: ALL },
  { route: 'GET /api/portal/units/:partNumber/:serial', sample: '/api/portal/units/VFW-T3-375/NO-SUCH-SERIAL', allow: ALL },
  { route: 'GET /api/shipments/:id/certificates.zip', sample: '/api/shipments/999999/certificates.zip', allow: ALL },
  { route: 'GET /api/shipments/:id/measurements.csv', sample: '/api/shipments/999999/measurements.csv', allow: ALL },
  { route: 'GET /api/certificates/:number.pdf', sample: '/api/certificates/NO-SUCH-CERT.pdf', allow: ALL },
  { route: 'GET /api/certificate-notices', allow: ['admin', 'quality'] },
  { route: 'GET /api/verify/:code', sample: '/api/verify/NO-SUCH-CODE', allow: 'public' },
  { route: 'GET /api/users', allow: ['admin'] },
  { route: 'GET /api/admin/outbox', allow: ['admin'] },
  { route: 'GET /api/admin/outbox/received', allow: ['admin'] },
  { route: 'POST /api/users', allow: ['admin'] },
  { route: 'PATCH /api/users/:id', sample: '/api/users/999999', allow: ['admin'] },
  { route: 'GET /api/customers', allow: ['admin', 'quality'] },
  { route: 'POST /api/customers', allow: ['admin', 'quality'] },
  { route: 'GET /api/customers/:id', sample: '/api/customers/999999', allow: ['admin', 'quality'] },
  { route: 'PATCH /api/customers/:id', sample: '/api/customers/999999', allow: ['admin', 'quality'] },
  { route: 'POST /api/customers/:id/contacts', sample: '/api/customers/999999/contacts', allow: ['admin', 'quality'] },
  { route: 'PATCH /api/customers/:id/contacts/:contactId', sample: '/api/customers/999999/contacts/999999', allow: ['admin', 'quality'] },
  { route: 'DELETE /api/customers/:id/contacts/:contactId', sample: '/api/customers/999999/contacts/999999', allow: ['admin', 'quality'] },
  { route: 'GET /api/shipments', allow: ALL },
  { route: 'GET /api/shipments/:id', sample: '/api/shipments/999999', allow: ALL },
  { route: 'POST /api/shipments', allow: ['admin', 'quality'] },
  { route: 'PATCH /api/shipments/:id', sample: '/api/shipments/999999', allow: ['admin', 'quality'] },
  { route: 'POST /api/shipments/:id/serials/preview', sample: '/api/shipments/999999/serials/preview', allow: ['admin', 'quality'] },
  { route: 'POST /api/shipments/:id/serials', sample: '/api/shipments/999999/serials', allow: ['admin', 'quality'] },
  { route: 'DELETE /api/shipments/:id/serials', sample: '/api/shipments/999999/serials', allow: ['admin', 'quality'] },
  { route: 'POST /api/shipments/:id/release', sample: '/api/shipments/999999/release', allow: ['quality'] },
  { route: 'POST /api/shipments/:id/dispatch', sample: '/api/shipments/999999/dispatch', allow: ['admin', 'quality'] },
  { route: 'POST /api/shipments/:id/returns', sample: '/api/shipments/999999/returns', allow: ['admin', 'quality'] },
  { route: 'POST /api/certificates/:number/revoke', sample: '/api/certificates/NO-SUCH-CERT/revoke', allow: ['quality'] },
  { route: 'POST /api/certificates/:number/reissue', sample: '/api/certificates/NO-SUCH-CERT/reissue', allow: ['quality'] },
  { route: 'GET /api/products/:partNumber/retest-policy', sample: '/api/products/VFW-T3-375/retest-policy', allow: ['admin', 'quality', 'engineer'] },
  { route: 'PUT /api/products/:partNumber/retest-policy', sample: '/api/products/NO-SUCH-PART/retest-policy', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/products/:partNumber/engineering-pattern', sample: '/api/products/VFW-T3-375/engineering-pattern', allow: ['admin', 'quality', 'engineer'] },
  { route: 'PUT /api/products/:partNumber/engineering-pattern', sample: '/api/products/NO-SUCH-PART/engineering-pattern', allow: ['admin', 'quality', 'engineer'] },
  { route: 'PUT /api/lots/:code/engineering', sample: '/api/lots/NO-SUCH-LOT/engineering', allow: ['admin', 'quality', 'engineer'] },
  { route: 'POST /api/units/:partNumber/:serial/dispositions', sample: '/api/units/NO-SUCH-PART/NO-SUCH/dispositions', allow: ['quality'] },
  { route: 'GET /api/lots', allow: STAFF },
  { route: 'GET /api/units/:serial', sample: '/api/units/NO-SUCH-SERIAL', allow: STAFF },
  { route: 'GET /api/search', sample: '/api/search?q=T3', allow: STAFF },
  { route: 'GET /api/stations', allow: ['admin', 'engineer'] },
  { route: 'POST /api/stations', allow: ['admin', 'engineer'] },
  { route: 'GET /api/stations/:id', sample: '/api/stations/999999', allow: ['admin', 'engineer'] },
  { route: 'PUT /api/stations/:id/owner', sample: '/api/stations/999999/owner', allow: ['admin', 'engineer'] },
  { route: 'GET /api/stations/owner-candidates', allow: ['admin', 'engineer'] },
  { route: 'GET /api/settings', allow: STAFF },
  { route: 'PUT /api/settings/calibration-due-soon-days', allow: ['admin'] },
  { route: 'PUT /api/settings/plant-time-zone', allow: ['admin'] },
  { route: 'GET /api/plant-time', allow: 'public' },
  { route: 'POST /api/stations/:id/token', sample: '/api/stations/999999/token', allow: ['admin', 'engineer'] },
  { route: 'DELETE /api/stations/:id/token', sample: '/api/stations/999999/token', allow: ['admin', 'engineer'] },
  { route: 'GET /api/stations/:id/calibration', sample: '/api/stations/999999/calibration', allow: ['admin', 'engineer'] },
  { route: 'GET /api/stations/:id/runs', sample: '/api/stations/999999/runs', allow: ['admin', 'engineer'] },
  { route: 'GET /api/instruments', allow: ['admin', 'engineer'] },
  { route: 'POST /api/instruments', allow: ['admin', 'engineer'] },
  { route: 'POST /api/instruments/:id/moves', sample: '/api/instruments/999999/moves', allow: ['admin', 'engineer'] },
  { route: 'PATCH /api/instruments/:id/holdings/:holdingId', sample: '/api/instruments/999999/holdings/999999', allow: ['admin', 'engineer'] },
  { route: 'POST /api/instruments/:id/calibrations', sample: '/api/instruments/999999/calibrations', allow: ['admin', 'engineer'] },
  { route: 'POST /api/calibrations/:id/supersede', sample: '/api/calibrations/999999/supersede', allow: ['admin', 'engineer'] },
  { route: 'GET /api/calibrations/:id/certificate', sample: '/api/calibrations/999999/certificate', allow: ['admin', 'engineer'] },
  { route: 'GET /api/calibration-impacts', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/calibration-impacts/:id', sample: '/api/calibration-impacts/999999', allow: ['admin', 'quality', 'engineer'] },
  { route: 'POST /api/calibration-impacts/:id/decisions', sample: '/api/calibration-impacts/999999/decisions', allow: ['admin', 'quality'] },
  { route: 'POST /api/calibration-impacts/:id/notices', sample: '/api/calibration-impacts/999999/notices', allow: ['admin', 'quality'] },
  { route: 'POST /api/calibration-impacts/:id/close', sample: '/api/calibration-impacts/999999/close', allow: ['admin', 'quality'] },
  { route: 'GET /api/lots/:code/summary', sample: '/api/lots/T3-2611-A/summary', allow: STAFF },
  { route: 'GET /api/lots/:code/parameters/:name', sample: '/api/lots/T3-2611-A/parameters/output_power', allow: STAFF },
  { route: 'PUT /api/lots/:code/parameters/:name/baseline', sample: '/api/lots/NO-LOT/parameters/output_power/baseline', allow: ['admin', 'engineer'] },
  { route: 'DELETE /api/lots/:code/parameters/:name/baseline', sample: '/api/lots/NO-LOT/parameters/output_power/baseline', allow: ['admin', 'engineer'] },
  { route: 'GET /api/lots/:code/phase-noise', sample: '/api/lots/NO-SUCH-LOT/phase-noise', allow: STAFF },
  { route: 'GET /api/trends', allow: STAFF },
  { route: 'GET /api/stations/compare', allow: STAFF },
  { route: 'GET /api/floor/snapshot', allow: STAFF },
  { route: 'GET /api/floor/stream', sample: '/api/floor/stream?once=1', allow: STAFF },
  { route: 'GET /api/floor/runs/:id', sample: '/api/floor/runs/999999999', allow: STAFF },
  { route: 'POST /api/v1/runs', allow: [] },
  { route: 'POST /api/v1/runs/batch', allow: [] },
  { route: 'GET /api/v1/schema/run.json', allow: 'public' },
  { route: 'GET /api/products', allow: STAFF },
  { route: 'GET /api/products/:partNumber/spec', sample: '/api/products/VFW-T3-375/spec', allow: STAFF },
  { route: 'POST /api/products', allow: ['admin', 'engineer'] },
  { route: 'PATCH /api/products/:partNumber', sample: '/api/products/NO-SUCH-PART', allow: ['admin', 'engineer'] },
  { route: 'GET /api/products/:partNumber/revisions', sample: '/api/products/VFW-T3-375/revisions', allow: ['admin', 'quality', 'engineer'] },
  { route: 'POST /api/products/:partNumber/revisions', sample: '/api/products/NO-SUCH-PART/revisions', allow: ['admin', 'engineer'] },
  { route: 'GET /api/specs', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/revisions/:id', sample: '/api/revisions/999999', allow: ['admin', 'quality', 'engineer'] },
  { route: 'PUT /api/revisions/:id/limits', sample: '/api/revisions/999999/limits', allow: ['admin', 'engineer'] },
  { route: 'GET /api/revisions/:id/limits.csv', sample: '/api/revisions/999999/limits.csv', allow: ['admin', 'quality', 'engineer'] },
  { route: 'POST /api/revisions/:id/limits/import', sample: '/api/revisions/999999/limits/import', allow: ['admin', 'engineer'] },
  { route: 'POST /api/revisions/:id/approve', sample: '/api/revisions/999999/approve', allow: ['quality'] },
  { route: 'POST /api/revisions/:id/submit', sample: '/api/revisions/999999/submit', allow: ['admin', 'engineer'] },
  { route: 'POST /api/revisions/:id/discard', sample: '/api/revisions/999999/discard', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/specs/awaiting-approval', allow: ['quality'] },
  { route: 'GET /api/specs/reviewers', allow: ['admin', 'engineer'] },
  { route: 'GET /api/revisions/:id/compare/:other', sample: '/api/revisions/999998/compare/999999', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/lots/:code', sample: '/api/lots/NO-SUCH-LOT', allow: STAFF },
  { route: 'GET /api/lots/:code/units', sample: '/api/lots/NO-SUCH-LOT/units', allow: STAFF },
  { route: 'GET /api/lots/:code/units.csv', sample: '/api/lots/NO-SUCH-LOT/units.csv', allow: STAFF },
  { route: 'POST /api/lots/:code/hold', sample: '/api/lots/NO-SUCH-LOT/hold', allow: ['engineer', 'quality'] },
  { route: 'POST /api/lots/:code/resume', sample: '/api/lots/NO-SUCH-LOT/resume', allow: ['engineer', 'quality'] },
  { route: 'POST /api/lots/:code/release', sample: '/api/lots/NO-SUCH-LOT/release', allow: ['quality'] },
  { route: 'GET /api/audit', allow: ['admin', 'quality'] },
  { route: 'GET /api/alert-rules', allow: STAFF },
  { route: 'POST /api/alert-rules', allow: ['admin', 'quality', 'engineer'] },
  { route: 'PATCH /api/alert-rules/:id', sample: '/api/alert-rules/999999', allow: ['admin', 'quality', 'engineer'] },
  { route: 'DELETE /api/alert-rules/:id', sample: '/api/alert-rules/999999', allow: ['admin', 'quality', 'engineer'] },
  { route: 'GET /api/alerts', allow: STAFF },
  { route: 'GET /api/alerts/count', allow: STAFF },
  { route: 'POST /api/alerts/:id/acknowledge', sample: '/api/alerts/999999/acknowledge', allow: STAFF },
  { route: 'POST /api/alerts/:id/comments', sample: '/api/alerts/999999/comments', allow: STAFF },
  { route: 'GET /api/me/alert-subscriptions', allow: STAFF },
  { route: 'POST /api/me/alert-subscriptions', allow: STAFF },
  { route: 'DELETE /api/me/alert-subscriptions/:id', sample: '/api/me/alert-subscriptions/999999', allow: STAFF },
  { route: 'GET /api/imports', allow: ['admin', 'engineer'] },
  { route: 'POST /api/imports', allow: ['admin', 'engineer'] },
  { route: 'GET /api/imports/:id', sample: '/api/imports/00000000-0000-4000-8000-000000000000', allow: ['admin', 'engineer'] },
  { route: 'GET /api/imports/:id/rejections.csv', sample: '/api/imports/00000000-0000-4000-8000-000000000000/rejections.csv', allow: ['admin', 'engineer'] },
  { route: 'POST /api/imports/:id/cancel', sample: '/api/imports/00000000-0000-4000-8000-000000000000/cancel', allow: ['admin', 'engineer'] },
  { route: 'POST /api/imports/:id/resume', sample: '/api/imports/00000000-0000-4000-8000-000000000000/resume', allow: ['admin', 'engineer'] },
]

const cookies: Partial<Record<Who, string>> = {}

beforeAll(async () => {
  for (const who of ALL) cookies[who] = await signIn(ROLE_ACCOUNTS[who])
})

describe('route × role matrix', () => {
  it('lists every API handler file, and the server has a rule for each', () => {
    const files = apiRoutesFromFiles()
    const inMatrix = MATRIX.map((m) => m.route).sort()
    expect(files).toEqual(inMatrix)
    for (const route of files) {
      const [method, path] = route.split(' ')
      expect(API_POLICY.some((r) => r.method === method && r.path === path), `${route} has no access rule`).toBe(true)
    }
  })

  for (const entry of MATRIX) {
    const [method, path] = entry.route.split(' ') as [string, string]
    const target = entry.sample ?? path
    it(`${entry.route}`, async () => {
      const anonymous = await call(method, target, { body: method === 'GET' ? undefined : {} })
      if (entry.allow === 'public') {
        expect(anonymous.status).not.toBe(401)
        expect(anonymous.status).not.toBe(403)
        return
      }
      expect(anonymous.status).toBe(401)
      for (const who of ALL) {
        const r = await call(method, target, { cookie: cookies[who], body: method === 'GET' ? undefined : {} })
        if (entry.allow.includes(who)) expect([401, 403], `${who} should be allowed`).not.toContain(r.status)
        else expect(r.status, `${who} should be refused`).toBe(403)
      }
    })
  }
})

describe('problem responses', () => {
  it('an unknown API route is a 404 problem+json', async () => {
    const r = await call('GET', '/api/no-such-thing', { cookie: cookies.admin })
    expect(r.status).toBe(404)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body).toMatchObject({ status: 404, title: expect.any(String), type: expect.any(String), detail: expect.any(String) })
  })

  it('a forbidden call is a 403 problem+json', async () => {
    const r = await call('GET', '/api/users', { cookie: cookies.operator })
    expect(r.status).toBe(403)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.status).toBe(403)
  })
})
