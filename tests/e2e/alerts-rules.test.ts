// Alert rules: each kind takes exactly the fields it reads, checked against the product's approved specification,
// and every change leaves an audit row.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { makePart } from '../support/shipping'
import { insertFiring, newRule, newStation } from '../support/alerts'

const tag = Date.now().toString(36).toUpperCase()
const P = `AR-${tag}`.slice(0, 30)
const BARE = `AR0-${tag}`.slice(0, 30)
let db: Knex
let engineer = ''
let quality = ''
let operator = ''

const cpk = (extra: Record<string, unknown> = {}) => ({ name: `Cpk watch ${tag}`, kind: 'cpk_low', partNumber: P, step: 'final', parameter: 'output_power', threshold: 1.33, windowUnits: 30, ...extra })
const post = (body: unknown, cookie = engineer) => call('POST', '/api/alert-rules', { cookie, body })
const pointers = (r: { body: any }) => (r.body.errors ?? []).map((e: any) => e.pointer).sort()
const auditOf = (id: number) => db('audit_log').where({ entity: 'alert_rule', entity_id: String(id) }).orderBy('id')

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  quality = await signIn(ROLE_ACCOUNTS.quality)
  operator = await signIn(ROLE_ACCOUNTS.operator)
  await makePart(P)
  const bare = await call('POST', '/api/products', { cookie: engineer, body: { partNumber: BARE, name: 'No spec yet', multiplier: 2, inputHz: 50e6, steps: ['final'] } })
  expect(bare.status).toBe(201)
})
afterAll(async () => { await db.destroy() })

describe('creating a rule', () => {
  it('stores a capability rule with its fields and writes an audit row in the same transaction', async () => {
    const r = await post(cpk())
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.rule).toMatchObject({ kind: 'cpk_low', partNumber: P, step: 'final', parameter: 'output_power', qualifier: 0, threshold: 1.33, windowUnits: 30, enabled: true, stationId: null, controlRules: [], updatedBy: expect.any(String) })
    const audit = await auditOf(r.body.rule.id)
    expect(audit).toHaveLength(1)
    expect(audit[0]).toMatchObject({ action: 'create' })
    expect(JSON.stringify(audit[0].after)).toContain('output_power')
  })

  it('answers 422 with a pointer at each field the kind needs and stores nothing', async () => {
    const name = `missing ${tag}`
    const r = await post({ name, kind: 'cpk_low', partNumber: P, step: 'final', threshold: 1 })
    expect(r.status).toBe(422)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(pointers(r)).toEqual(['/parameter', '/windowUnits'])
    const silent = await post({ name, kind: 'station_silent' })
    expect(silent.status).toBe(422)
    expect(pointers(silent)).toEqual(['/silentMinutes'])
    expect(await db('alert_rules').where({ name })).toHaveLength(0)
  })

  it('refuses a field the kind does not use rather than storing it unread', async () => {
    const y = await post({ name: `yield ${tag}`, kind: 'yield_low', partNumber: P, step: 'final', threshold: 95, windowUnits: 50, controlRules: [1], parameter: 'output_power' })
    expect(y.status).toBe(422)
    expect(pointers(y)).toEqual(['/controlRules', '/parameter'])
    expect(y.body.errors[0].message).toContain('not used')
    const c = await post({ name: `cal ${tag}`, kind: 'calibration_due', threshold: 3 })
    expect(pointers(c)).toEqual(['/threshold'])
    // null stands for "not given"
    expect((await post({ name: `cal ${tag}`, kind: 'calibration_due', threshold: null, stationId: null })).status).toBe(201)
  })

  it('checks the product, the step and the parameter against the approved specification', async () => {
    expect(pointers(await post(cpk({ partNumber: 'NO-SUCH-PART-AR' })))).toEqual(['/partNumber'])
    expect(pointers(await post(cpk({ step: 'burn_in' })))).toEqual(['/step'])
    expect(pointers(await post(cpk({ parameter: 'supply_current' })))).toEqual(['/parameter'])
    // the same name at another qualifier is another parameter
    expect(pointers(await post(cpk({ qualifier: 10_000 })))).toEqual(['/parameter'])
    const noSpec = await post(cpk({ partNumber: BARE }))
    expect(noSpec.status).toBe(422)
    expect(pointers(noSpec)).toEqual(['/partNumber'])
    expect(noSpec.body.errors[0].message).toContain('no approved specification')
    // first-pass yield needs a step of the product only
    expect((await post({ name: `yield ${tag}`, kind: 'yield_low', partNumber: BARE, step: 'final', threshold: 90, windowUnits: 20 })).status).toBe(201)
  })

  it('keeps the figures in range for each kind', async () => {
    const cases: [Record<string, unknown>, string][] = [
      [cpk({ windowUnits: 1 }), '/windowUnits'],
      [cpk({ windowUnits: 10_001 }), '/windowUnits'],
      [cpk({ threshold: 0 }), '/threshold'],
      [{ name: 'y', kind: 'yield_low', partNumber: P, step: 'final', windowUnits: 20, threshold: 100.5 }, '/threshold'],
      [{ name: 'y', kind: 'yield_low', partNumber: P, step: 'final', windowUnits: 20, threshold: 0 }, '/threshold'],
      [{ ...cpk(), kind: 'station_bias', threshold: -0.1 }, '/threshold'],
      [{ ...cpk({ threshold: null }), kind: 'drift_toward_limit', horizonUnits: 0 }, '/horizonUnits'],
      [{ name: 's', kind: 'station_silent', silentMinutes: 0 }, '/silentMinutes'],
      [{ ...cpk({ threshold: null }), kind: 'control_rule', controlRules: [] }, '/controlRules'],
      [{ ...cpk({ threshold: null }), kind: 'control_rule', controlRules: [2, 5] }, '/controlRules/1'],
      [{ ...cpk({ threshold: null }), kind: 'control_rule', controlRules: [3, 3] }, '/controlRules/1'],
    ]
    for (const [body, pointer] of cases) {
      const r = await post(body)
      expect(r.status, JSON.stringify(body)).toBe(422)
      expect(pointers(r), JSON.stringify(body)).toEqual([pointer])
    }
    // the bounds themselves are accepted
    expect((await post(cpk({ windowUnits: 2 }))).status).toBe(201)
    expect((await post({ name: 'y', kind: 'yield_low', partNumber: P, step: 'final', windowUnits: 10_000, threshold: 100 })).status).toBe(201)
  })

  it('stores the Western Electric rules watched as a bit mask and reads them back', async () => {
    const r = await post({ ...cpk({ threshold: null }), kind: 'control_rule', controlRules: [3, 1] })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.rule.controlRules).toEqual([1, 3])
    expect((await db('alert_rules').where({ id: r.body.rule.id }).first()).control_rules).toBe(0b101)
  })

  it('takes one station or every station, and refuses an unknown one', async () => {
    const station = await newStation(engineer, 'AR')
    const one = await post({ name: `silent ${tag}`, kind: 'station_silent', silentMinutes: 45, stationId: station })
    expect(one.status).toBe(201)
    expect(one.body.rule.stationCode).toMatch(/^AR-/)
    expect((await post({ name: `silent ${tag}`, kind: 'station_silent', silentMinutes: 45 })).body.rule.stationId).toBeNull()
    expect(pointers(await post({ name: `silent ${tag}`, kind: 'station_silent', silentMinutes: 45, stationId: 99_999_999 }))).toEqual(['/stationId'])
  })

  it('answers 400 for a body that does not fit the schema', async () => {
    const r = await post({ name: 'x', kind: 'no_such_kind' })
    expect(r.status).toBe(400)
    expect(pointers(r)).toEqual(['/kind'])
    expect((await post({ ...cpk(), colour: 'red' })).status).toBe(400)
  })
})

describe('roles', () => {
  it('lets quality create and every staff role read, but not an operator write', async () => {
    expect((await post(cpk({ name: `quality ${tag}` }), quality)).status).toBe(201)
    expect((await post(cpk({ name: `operator ${tag}` }), operator)).status).toBe(403)
    const list = await call('GET', `/api/alert-rules?product=${P}&kind=cpk_low`, { cookie: operator })
    expect(list.status).toBe(200)
    expect(list.body.rules.length).toBeGreaterThan(0)
    expect(list.body.rules.every((r: any) => r.partNumber === P && r.kind === 'cpk_low')).toBe(true)
    expect(list.body.rules.some((r: any) => r.name === `quality ${tag}`)).toBe(true)
    expect(Array.isArray(list.body.stations)).toBe(true)
    expect((await call('GET', '/api/alert-rules?kind=nonsense', { cookie: operator })).status).toBe(400)
    const customer = await signIn(ROLE_ACCOUNTS.customer)
    expect((await call('GET', '/api/alert-rules', { cookie: customer })).status).toBe(403)
  })
})

describe('changing a rule', () => {
  it('changes fields, audits before and after, and disables and enables with their own audit actions', async () => {
    const id = await newRule(engineer, cpk({ name: `change ${tag}` }))
    const r = await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: { threshold: 1.0, windowUnits: 60 } })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.rule).toMatchObject({ threshold: 1, windowUnits: 60, parameter: 'output_power' })
    const off = await call('PATCH', `/api/alert-rules/${id}`, { cookie: quality, body: { enabled: false } })
    expect(off.body.rule.enabled).toBe(false)
    expect((await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: { enabled: true } })).body.rule.enabled).toBe(true)
    const audit = await auditOf(id)
    expect(audit.map((a: any) => a.action)).toEqual(['create', 'update', 'disable', 'enable'])
    const update = audit[1]
    const before = typeof update.before === 'string' ? JSON.parse(update.before) : update.before
    const after = typeof update.after === 'string' ? JSON.parse(update.after) : update.after
    expect([before.threshold, after.threshold]).toEqual([1.33, 1])
  })

  it('refuses a change that leaves the rule invalid, and leaves it as it was', async () => {
    const id = await newRule(engineer, cpk({ name: `keep ${tag}` }))
    const r = await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: { windowUnits: null } })
    expect(r.status).toBe(422)
    expect(pointers(r)).toEqual(['/windowUnits'])
    expect((await db('alert_rules').where({ id }).first()).window_units).toBe(30)
    expect((await auditOf(id))).toHaveLength(1)
    expect((await call('PATCH', '/api/alert-rules/99999999', { cookie: engineer, body: { enabled: false } })).status).toBe(404)
    expect((await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: {} })).status).toBe(400)
  })

  it('clears the stored fields a new kind does not use, but refuses them in the body', async () => {
    const id = await newRule(engineer, cpk({ name: `rekind ${tag}` }))
    const refused = await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: { kind: 'yield_low', threshold: 90, parameter: 'output_power' } })
    expect(pointers(refused)).toEqual(['/parameter'])
    const r = await call('PATCH', `/api/alert-rules/${id}`, { cookie: engineer, body: { kind: 'yield_low', threshold: 90 } })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.rule).toMatchObject({ kind: 'yield_low', parameter: null, qualifier: null, step: 'final', threshold: 90, windowUnits: 30 })
    const row = await db('alert_rules').where({ id }).first()
    expect([row.parameter, row.qualifier]).toEqual([null, null])
  })
})

describe('deleting a rule', () => {
  it('deletes a rule that never fired, with the subscriptions to it, and audits it', async () => {
    const id = await newRule(engineer, cpk({ name: `gone ${tag}` }))
    expect((await call('POST', '/api/me/alert-subscriptions', { cookie: engineer, body: { target: 'rule', targetId: id } })).status).toBe(201)
    const r = await call('DELETE', `/api/alert-rules/${id}`, { cookie: engineer })
    expect(r.status).toBe(200)
    expect(await db('alert_rules').where({ id })).toHaveLength(0)
    expect(await db('alert_subscriptions').where({ target: 'rule', target_id: id })).toHaveLength(0)
    expect((await auditOf(id)).map((a: any) => a.action)).toEqual(['create', 'delete'])
    expect((await call('DELETE', `/api/alert-rules/${id}`, { cookie: engineer })).status).toBe(404)
  })

  it('refuses with 409 to delete a rule that raised an alert, saying to disable it', async () => {
    const id = await newRule(engineer, cpk({ name: `fired ${tag}` }))
    await insertFiring(db, { ruleId: id })
    const r = await call('DELETE', `/api/alert-rules/${id}`, { cookie: engineer })
    expect(r.status).toBe(409)
    expect(r.body.detail).toContain('disable it')
    expect(await db('alert_rules').where({ id })).toHaveLength(1)
    const listed = (await call('GET', `/api/alert-rules?product=${P}`, { cookie: engineer })).body.rules.find((x: any) => x.id === id)
    expect(listed.firings).toBe(1)
  })
})
