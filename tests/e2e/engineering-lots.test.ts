import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

// Engineering and trial lots: marked by the product's code pattern or by hand, kept and judged, and left out of
// trends, station comparison and the floor unless a view asks for them.
const tokens = stationTokens()
const PART = 'VFW-T3-375'
const tag = Date.now().toString(36).toUpperCase()
const PRODUCTION = `PR${tag}`
const ENGINEERING = `EN${tag}-1`
const UNITS = 3
let engineer: string
let admin: string
let operator: string
let originalPattern: string | null = null

async function postLot(lot: string, power: number) {
  for (let i = 0; i < UNITS; i++) {
    const started = new Date(Date.now() - 600_000 + i * 1000)
    const run = tripleRun({
      serial: uniqueSerial('EL'), lot, startedAt: started.toISOString(), finishedAt: new Date(started.getTime() + 500).toISOString(),
      measurements: (tripleRun().measurements as any[]).map((m) => (m.name === 'output_power' ? { ...m, value: power + i * 0.05 } : m)),
    })
    const r = await call('POST', '/api/v1/runs', { body: run, token: tokens['ATE-T3-01'] })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
  }
}
const trends = (extra = '') => call('GET', `/api/trends?part=${PART}&name=output_power&step=final${extra}`, { cookie: engineer })
const compare = (extra = '') => call('GET', `/api/stations/compare?part=${PART}&name=output_power&step=final${extra}`, { cookie: engineer })
const codesOf = (r: { body: any }) => r.body.lots.map((l: any) => l.code) as string[]

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  admin = await signIn(ROLE_ACCOUNTS.admin)
  operator = await signIn(ROLE_ACCOUNTS.operator)
  originalPattern = (await call('GET', `/api/products/${PART}/engineering-pattern`, { cookie: engineer })).body.pattern
})
afterAll(async () => {
  await call('PUT', `/api/products/${PART}/engineering-pattern`, { cookie: engineer, body: { pattern: originalPattern } })
})

describe('engineering lots by pattern', () => {
  it('refuses a pattern that is not one, with a pointer, and changes nothing', async () => {
    for (const pattern of ['*', 'ENG %', 'A-*, a-*']) {
      const r = await call('PUT', `/api/products/${PART}/engineering-pattern`, { cookie: engineer, body: { pattern } })
      expect(r.status, pattern).toBe(422)
      expect(r.body.errors[0].pointer).toBe('/pattern')
    }
    expect((await call('GET', `/api/products/${PART}/engineering-pattern`, { cookie: engineer })).body.pattern).toBe(originalPattern)
    expect((await call('PUT', `/api/products/${PART}/engineering-pattern`, { cookie: engineer, body: { pattern: 7 } })).status).toBe(400)
  })

  it('a saved pattern marks a lot first seen afterwards; other lots stay production lots', async () => {
    const saved = await call('PUT', `/api/products/${PART}/engineering-pattern`, { cookie: engineer, body: { pattern: ` en${tag}-* ,TRIAL${tag}-?` } })
    expect(saved.status).toBe(200)
    expect(saved.body.pattern).toBe(`en${tag}-*, TRIAL${tag}-?`)
    const audit = await call('GET', `/api/audit?entity=product&entityId=${PART}&action=engineering_pattern`, { cookie: admin })
    expect(audit.body.entries[0].after).toEqual({ pattern: `en${tag}-*, TRIAL${tag}-?` })

    await postLot(PRODUCTION, 7.0)
    await postLot(ENGINEERING, 7.6)
    const eng = await call('GET', `/api/lots/${ENGINEERING}`, { cookie: operator })
    expect(eng.body.lot).toMatchObject({ engineering: true, engineeringSource: 'pattern' })
    expect((await call('GET', `/api/lots/${PRODUCTION}`, { cookie: operator })).body.lot).toMatchObject({ engineering: false, engineeringSource: null })
    // kept and judged like any other lot
    expect(eng.body.lot.counts.units).toBe(UNITS)
    const listed = (await call('GET', '/api/lots', { cookie: operator })).body.lots
    expect(listed.find((l: any) => l.code === ENGINEERING).engineering).toBe(true)
    expect(listed.find((l: any) => l.code === PRODUCTION).engineering).toBe(false)
  })

  it('trends leave engineering lots out by default and take them in with engineering=include', async () => {
    const out = await trends()
    expect(out.status).toBe(200)
    expect(out.body.engineering).toBe('exclude')
    expect(codesOf(out)).toContain(PRODUCTION)
    expect(codesOf(out)).not.toContain(ENGINEERING)
    const inc = await trends('&engineering=include')
    expect(inc.body.engineering).toBe('include')
    expect(inc.body.lots.find((l: any) => l.code === ENGINEERING)).toMatchObject({ engineering: true, n: UNITS })
    expect(inc.body.lots.find((l: any) => l.code === PRODUCTION).engineering).toBe(false)
    const bad = await trends('&engineering=maybe')
    expect(bad.status).toBe(400)
    expect(bad.body.errors.map((e: any) => e.pointer)).toContain('/engineering')
  })

  it('station comparison pools production lots unless asked, and compares a named engineering lot on its own', async () => {
    const out = await compare()
    const inc = await compare('&engineering=include')
    expect(out.status).toBe(200)
    expect(out.body.engineering).toBe('exclude')
    expect(inc.body.pooled.n - out.body.pooled.n).toBe(UNITS)
    const named = await compare(`&lot=${ENGINEERING}`)
    expect(named.body.pooled.n).toBe(UNITS)
  })

  it('the floor shows the production lot and not the engineering lot, nor its runs among the arriving ones', async () => {
    const floor = await call('GET', '/api/floor/snapshot', { cookie: operator })
    const codes = floor.body.lots.map((l: any) => l.code)
    expect(codes).toContain(PRODUCTION)
    expect(codes).not.toContain(ENGINEERING)
    const arriving = floor.body.recent.map((r: any) => r.lot)
    expect(arriving).not.toContain(ENGINEERING)
    expect(floor.body.recent.length).toBeGreaterThan(0)
  })
})

describe('engineering lots by hand', () => {
  const auditOf = async (code: string) => (await call('GET', `/api/audit?entity=lot&entityId=${code}`, { cookie: admin })).body

  it('marks a lot engineering with its reason in the audit row, and the cross-lot views follow', async () => {
    const r = await call('PUT', `/api/lots/${PRODUCTION}/engineering`, { cookie: engineer, body: { engineering: true, reason: 'trial of the revised output filter' } })
    expect(r.status).toBe(200)
    expect(r.body).toEqual({ code: PRODUCTION, engineering: true, engineeringSource: 'hand', changed: true })
    const audit = await auditOf(PRODUCTION)
    expect(audit.total).toBe(1)
    expect(audit.entries[0]).toMatchObject({ action: 'mark_engineering', before: { engineering: false, source: null }, after: { engineering: true, source: 'hand', reason: 'trial of the revised output filter' } })
    expect((await call('GET', `/api/lots/${PRODUCTION}`, { cookie: engineer })).body.lot).toMatchObject({ engineering: true, engineeringSource: 'hand' })
    expect(codesOf(await trends())).not.toContain(PRODUCTION)
    expect((await call('GET', '/api/floor/snapshot', { cookie: operator })).body.lots.map((l: any) => l.code)).not.toContain(PRODUCTION)
  })

  it('the same mark again changes nothing and writes no row; a blank reason and an unknown lot are refused', async () => {
    const again = await call('PUT', `/api/lots/${PRODUCTION}/engineering`, { cookie: engineer, body: { engineering: true, reason: 'once more' } })
    expect(again.body.changed).toBe(false)
    expect((await auditOf(PRODUCTION)).total).toBe(1)
    const blank = await call('PUT', `/api/lots/${PRODUCTION}/engineering`, { cookie: engineer, body: { engineering: false, reason: '     ' } })
    expect(blank.status).toBe(422)
    expect(blank.body.errors[0].pointer).toBe('/reason')
    expect((await call('PUT', `/api/lots/${PRODUCTION}/engineering`, { cookie: engineer, body: { engineering: false } })).status).toBe(400)
    expect((await call('GET', `/api/lots/${PRODUCTION}`, { cookie: engineer })).body.lot.engineering).toBe(true)
    expect((await call('PUT', `/api/lots/NO-SUCH-${tag}/engineering`, { cookie: engineer, body: { engineering: true, reason: 'not there' } })).status).toBe(404)
    expect((await call('PUT', `/api/lots/${PRODUCTION}/engineering`, { cookie: operator, body: { engineering: false, reason: 'operator tries' } })).status).toBe(403)
  })

  it('marks a pattern lot a production lot again by hand, and it returns to the trends', async () => {
    const r = await call('PUT', `/api/lots/${ENGINEERING}/engineering`, { cookie: engineer, body: { engineering: false, reason: 'samples met the production build' } })
    expect(r.body).toMatchObject({ engineering: false, engineeringSource: 'hand', changed: true })
    expect((await auditOf(ENGINEERING)).entries[0]).toMatchObject({ action: 'mark_production', before: { engineering: true, source: 'pattern' } })
    expect(codesOf(await trends())).toContain(ENGINEERING)
  })
})
