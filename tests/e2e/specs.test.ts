import { beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const PART = `TST-${tag}`
const cookies: Record<'admin' | 'quality' | 'engineer' | 'operator', string> = { admin: '', quality: '', engineer: '', operator: '' }

async function csv(method: string, path: string, cookie: string, text?: string, type = 'text/csv') {
  const r = await fetch(baseUrl() + path, { method, headers: { cookie, ...(text !== undefined ? { 'content-type': type } : {}), accept: 'text/csv, application/json' }, body: text })
  const body = await r.text()
  let json: any = null
  try { json = JSON.parse(body) } catch { /* CSV */ }
  return { status: r.status, headers: r.headers, text: body, body: json }
}

const power = { step: 'final', name: 'output_power', lsl: 5, usl: 9, target: 7, unit: 'dBm', rule: 'guarded', defaultUncertainty: 0.3, key: true }
const LIMITS = [
  power,
  { step: 'final', name: 'phase_noise', qualifier: 1e3, usl: -130, unit: 'dBc/Hz', rule: 'guarded', defaultUncertainty: 1.5 },
  { step: 'final', name: 'phase_noise', qualifier: 1e5, usl: -149.5, unit: 'dBc/Hz' },
  { step: 'final', name: 'harmonic_rejection', qualifier: 2, lsl: 28, unit: 'dB' },
  { step: 'tune', name: 'frequency_error', lsl: -2, usl: 2, target: 0, unit: 'ppm' },
  { step: 'final', name: 'integrated_jitter', usl: 4e-14, unit: 's', required: false },
]

beforeAll(async () => {
  for (const who of Object.keys(cookies) as (keyof typeof cookies)[]) cookies[who] = await signIn(ROLE_ACCOUNTS[who])
})

describe('products', () => {
  it('creates a product with output = N × input, and refuses a duplicate part number', async () => {
    const r = await call('POST', '/api/products', { cookie: cookies.engineer, body: { partNumber: PART, name: 'Test tripler', multiplier: 3, inputHz: 100e6, steps: ['tune', 'final'] } })
    expect(r.status).toBe(201)
    expect(r.body.product).toMatchObject({ partNumber: PART, multiplier: 3, inputHz: 100e6, outputHz: 300e6, steps: ['tune', 'final'], jitterBandLoHz: 1e3, jitterBandHiHz: 1e6 })
    const dup = await call('POST', '/api/products', { cookie: cookies.admin, body: { partNumber: PART, name: 'Again', multiplier: 2, inputHz: 1e6, steps: ['final'] } })
    expect(dup.status).toBe(409)
    expect(dup.body.errors).toEqual([{ pointer: '/partNumber', message: 'already in use' }])
  })

  it('answers a malformed product with 400 and pointers, and an inverted jitter band with 422', async () => {
    const bad = await call('POST', '/api/products', { cookie: cookies.engineer, body: { partNumber: 'x', multiplier: 0, inputHz: -1, steps: [] } })
    expect(bad.status).toBe(400)
    const ptrs = bad.body.errors.map((e: any) => e.pointer)
    expect(ptrs).toEqual(expect.arrayContaining(['/partNumber', '/name', '/multiplier', '/inputHz', '/steps']))
    const band = await call('PATCH', `/api/products/${PART}`, { cookie: cookies.engineer, body: { jitterBandLoHz: 1e6, jitterBandHiHz: 1e4 } })
    expect(band.status).toBe(422)
    expect(band.body.errors[0].pointer).toBe('/jitterBandHiHz')
  })

  it('changes a product and keeps the output frequency consistent; the change is audited', async () => {
    const r = await call('PATCH', `/api/products/${PART}`, { cookie: cookies.admin, body: { multiplier: 4, name: 'Test quadrupler' } })
    expect(r.status).toBe(200)
    expect(r.body.product).toMatchObject({ multiplier: 4, name: 'Test quadrupler', outputHz: 400e6 })
    const audit = await call('GET', `/api/audit?entity=product&entityId=${PART}`, { cookie: cookies.quality })
    expect(audit.status).toBe(200)
    expect(audit.body.entries.map((e: any) => e.action)).toEqual(['update', 'create'])
    expect(audit.body.entries[0].before.multiplier).toBe(3)
    expect(audit.body.entries[0].after.multiplier).toBe(4)
    expect(audit.body.entries[0].user.email).toBe(ROLE_ACCOUNTS.admin)
  })

  it('refuses a change to the part number itself and an unknown product', async () => {
    expect((await call('PATCH', `/api/products/${PART}`, { cookie: cookies.admin, body: { partNumber: 'OTHER' } })).status).toBe(400)
    expect((await call('PATCH', '/api/products/NO-SUCH-PART', { cookie: cookies.admin, body: { name: 'x' } })).status).toBe(404)
  })
})

describe('specification revisions', () => {
  let rev1 = 0
  let rev2 = 0
  const second = { id: 0, email: '', cookie: '' }

  it('opens an empty first draft for a new product, only one draft at a time', async () => {
    const r = await call('POST', `/api/products/${PART}/revisions`, { cookie: cookies.engineer })
    expect(r.status).toBe(201)
    rev1 = r.body.id
    expect(rev1).toBeGreaterThan(0)
    const again = await call('POST', `/api/products/${PART}/revisions`, { cookie: cookies.admin })
    expect(again.status).toBe(409)
    expect(again.body.draftId).toBe(rev1)
    const view = await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.quality })
    expect(view.body.revision).toMatchObject({ id: rev1, revision: 1, status: 'draft', inForce: false, author: { name: 'Milo Harrow' }, approvedBy: null })
    expect(view.body.limits).toEqual([])
  })

  it('refuses limits that break the rules, with a pointer for each', async () => {
    const bad = [
      power,
      { ...power, name: 'supply_current', unit: 'mA', lsl: 90, usl: 40, target: null },
      { step: 'final', name: 'phase_noise', qualifier: -10, usl: -120, unit: 'dBc/Hz' },
      { step: 'final', name: 'harmonic_rejection', qualifier: 1.5, lsl: 30, unit: 'dB' },
      { step: 'burn-in', name: 'output_power', lsl: 5, usl: 9, unit: 'dBW' },
      { step: 'final', name: 'frequency_error', unit: 'ppm' },
      { ...power, usl: 10 },
    ]
    const r = await call('PUT', `/api/revisions/${rev1}/limits`, { cookie: cookies.engineer, body: { limits: bad } })
    expect(r.status).toBe(422)
    const ptrs = r.body.errors.map((e: any) => e.pointer)
    expect(ptrs).toEqual(['/limits/1/usl', '/limits/2/qualifier', '/limits/3/qualifier', '/limits/4/step', '/limits/4/unit', '/limits/5/usl', '/limits/6/name'])
    const typed = await call('PUT', `/api/revisions/${rev1}/limits`, { cookie: cookies.engineer, body: { limits: [{ ...power, lsl: '5' }] } })
    expect(typed.status).toBe(400)
    expect(typed.body.errors[0].pointer).toBe('/limits/0/lsl')
    expect((await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.engineer })).body.limits).toEqual([])
  })

  it('stores a valid limit table in the given order', async () => {
    const r = await call('PUT', `/api/revisions/${rev1}/limits`, { cookie: cookies.engineer, body: { limits: LIMITS } })
    expect(r.status).toBe(200)
    const view = await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.engineer })
    expect(view.body.limits.map((l: any) => [l.step, l.name, l.qualifier])).toEqual(LIMITS.map((l) => [l.step, l.name, l.qualifier ?? 0]))
    expect(view.body.limits[5]).toMatchObject({ usl: 4e-14, lsl: null, required: false, rule: 'simple', key: false })
  })

  it('an engineer cannot approve; the draft author cannot approve even as a quality engineer', async () => {
    expect((await call('POST', `/api/revisions/${rev1}/approve`, { cookie: cookies.engineer })).status).toBe(403)

    second.email = `author-${tag.toLowerCase()}@tercet.test`
    const made = await call('POST', '/api/users', { cookie: cookies.admin, body: { email: second.email, name: 'Second Author', role: 'engineer', password: 'second-author-pw' } })
    expect(made.status).toBe(201)
    second.id = made.body.user.id
    second.cookie = await signIn(second.email, 'second-author-pw')
    const other = await call('POST', '/api/products', { cookie: second.cookie, body: { partNumber: `${PART}-B`, name: 'Author test', multiplier: 2, inputHz: 50e6, steps: ['final'] } })
    expect(other.status).toBe(201)
    const draft = await call('POST', `/api/products/${PART}-B/revisions`, { cookie: second.cookie })
    expect(draft.status).toBe(201)
    expect((await call('PUT', `/api/revisions/${draft.body.id}/limits`, { cookie: second.cookie, body: { limits: [power] } })).status).toBe(200)

    expect((await call('PATCH', `/api/users/${second.id}`, { cookie: cookies.admin, body: { role: 'quality' } })).status).toBe(200)
    const own = await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: second.cookie })
    expect(own.status).toBe(403)
    expect(own.body.detail).toMatch(/separation of duties/i)
    expect((await call('GET', `/api/revisions/${draft.body.id}`, { cookie: cookies.quality })).body.revision.status).toBe('draft')

    const byOther = await call('POST', `/api/revisions/${draft.body.id}/approve`, { cookie: cookies.quality })
    expect(byOther.status).toBe(200)
  })

  it('a quality engineer approves the draft; it comes into force at once and is audited', async () => {
    const r = await call('POST', `/api/revisions/${rev1}/approve`, { cookie: cookies.quality, body: {} })
    expect(r.status).toBe(200)
    const view = await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.engineer })
    expect(view.body.revision).toMatchObject({ status: 'approved', inForce: true, approvedBy: { name: 'Rosa Fenwright' } })
    expect(new Date(view.body.revision.effectiveAt).getTime()).toBeLessThanOrEqual(Date.now() + 1000)
    const spec = await call('GET', `/api/products/${PART}/spec`, { cookie: cookies.engineer })
    expect(spec.body.revision.revision).toBe(1)
    expect(spec.body.limits).toHaveLength(LIMITS.length)
    const audit = await call('GET', `/api/audit?entity=spec_revision&entityId=${rev1}&action=approve`, { cookie: cookies.admin })
    expect(audit.body.total).toBe(1)
    expect(audit.body.entries[0].user.email).toBe(ROLE_ACCOUNTS.quality)
  })

  it('an approved revision is immutable: limits, import and a second approval are 409', async () => {
    expect((await call('PUT', `/api/revisions/${rev1}/limits`, { cookie: cookies.engineer, body: { limits: LIMITS.slice(1) } })).status).toBe(409)
    expect((await csv('POST', `/api/revisions/${rev1}/limits/import`, cookies.engineer, 'step,name,usl,unit\nfinal,output_power,9,dBm\n')).status).toBe(409)
    expect((await call('POST', `/api/revisions/${rev1}/approve`, { cookie: cookies.quality })).status).toBe(409)
    expect((await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.engineer })).body.limits).toHaveLength(LIMITS.length)
  })

  it('a step still used by limits cannot be removed from the product', async () => {
    const r = await call('PATCH', `/api/products/${PART}`, { cookie: cookies.engineer, body: { steps: ['final'] } })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([{ pointer: '/steps', message: '"tune" is used by revision 1' }])
  })

  it('a new draft copies the revision in force, and the CSV export imports back to an identical draft', async () => {
    const r = await call('POST', `/api/products/${PART}/revisions`, { cookie: cookies.engineer })
    expect(r.status).toBe(201)
    rev2 = r.body.id
    const original = (await call('GET', `/api/revisions/${rev1}`, { cookie: cookies.engineer })).body.limits
    const copied = (await call('GET', `/api/revisions/${rev2}`, { cookie: cookies.engineer })).body
    expect(copied.revision.revision).toBe(2)
    expect(copied.limits).toEqual(original)

    const exported = await csv('GET', `/api/revisions/${rev1}/limits.csv`, cookies.quality)
    expect(exported.status).toBe(200)
    expect(exported.headers.get('content-type')).toContain('text/csv')
    // limits are numbers a spreadsheet can chart: written plain, with an ASCII minus and no apostrophe
    expect(exported.text).toContain(',-149.5,')
    expect(exported.text).not.toContain("'-")

    expect((await call('PUT', `/api/revisions/${rev2}/limits`, { cookie: cookies.engineer, body: { limits: [power] } })).status).toBe(200)
    const imported = await csv('POST', `/api/revisions/${rev2}/limits/import`, cookies.engineer, exported.text)
    expect(imported.status).toBe(200)
    expect(imported.body).toMatchObject({ applied: true, count: LIMITS.length })
    expect((await call('GET', `/api/revisions/${rev2}`, { cookie: cookies.engineer })).body.limits).toEqual(original)
  })

  it('a preview with row errors reports them by row and applies nothing; the same file without preview is refused whole', async () => {
    const file = [
      'step,name,qualifier,lsl,usl,target,unit',
      'final,output_power,,5,9.5,7,dBm',
      'final,output_power,,9,5,,dBm',
      'final,phase_noise,0,,-140,,dBc/Hz',
      'final,supply_current,,forty,80,,mA',
    ].join('\r\n')
    const before = (await call('GET', `/api/revisions/${rev2}`, { cookie: cookies.engineer })).body.limits
    const preview = await csv('POST', `/api/revisions/${rev2}/limits/import?preview=1`, cookies.engineer, file)
    expect(preview.status).toBe(200)
    expect(preview.body.applied).toBe(false)
    expect(preview.body.rows).toHaveLength(4)
    expect(preview.body.errors.map((e: any) => [e.row, e.column])).toEqual([[3, 'usl'], [3, 'name'], [4, 'qualifier'], [5, 'lsl']])
    const applied = await csv('POST', `/api/revisions/${rev2}/limits/import`, cookies.engineer, file)
    expect(applied.status).toBe(422)
    expect(applied.body.errors[0].message).toMatch(/^row 3, usl:/)
    expect((await call('GET', `/api/revisions/${rev2}`, { cookie: cookies.engineer })).body.limits).toEqual(before)
    expect((await csv('POST', `/api/revisions/${rev2}/limits/import`, cookies.engineer, '{}', 'application/json')).status).toBe(415)
  })

  it('compare shows added, removed and changed limits between two revisions', async () => {
    const limits = (await call('GET', `/api/revisions/${rev2}`, { cookie: cookies.engineer })).body.limits
    const next = [{ ...limits[0], usl: 8.5 }, ...limits.slice(1, 5), { step: 'final', name: 'supply_current', lsl: 40, usl: 90, unit: 'mA' }]
    expect((await call('PUT', `/api/revisions/${rev2}/limits`, { cookie: cookies.engineer, body: { limits: next } })).status).toBe(200)
    const d = await call('GET', `/api/revisions/${rev1}/compare/${rev2}`, { cookie: cookies.quality })
    expect(d.status).toBe(200)
    expect(d.body.changed).toHaveLength(1)
    expect(d.body.changed[0]).toMatchObject({ fields: ['usl'], before: { name: 'output_power', usl: 9 }, after: { usl: 8.5 } })
    expect(d.body.added.map((l: any) => l.name)).toEqual(['supply_current'])
    expect(d.body.removed.map((l: any) => l.name)).toEqual(['integrated_jitter'])
    expect(d.body.unchanged).toBe(4)
  })

  it('an approval cannot take effect in the past', async () => {
    const r = await call('POST', `/api/revisions/${rev2}/approve`, { cookie: cookies.quality, body: { effectiveAt: new Date(Date.now() - 3600_000).toISOString() } })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].pointer).toBe('/effectiveAt')
  })

  it('approving the next revision supersedes the previous one, which stays listed', async () => {
    expect((await call('POST', `/api/revisions/${rev2}/approve`, { cookie: cookies.quality })).status).toBe(200)
    const list = await call('GET', `/api/products/${PART}/revisions`, { cookie: cookies.engineer })
    expect(list.status).toBe(200)
    expect(list.body.revisions.map((r: any) => [r.revision, r.status, r.inForce])).toEqual([[2, 'approved', true], [1, 'superseded', false]])
    expect(list.body.revisions[0].author.name).toBe('Milo Harrow')
    expect(list.body.revisions[0].approvedBy.name).toBe('Rosa Fenwright')
    const spec = await call('GET', `/api/products/${PART}/spec`, { cookie: cookies.engineer })
    expect(spec.body.revision.revision).toBe(2)
    const overview = await call('GET', '/api/specs', { cookie: cookies.quality })
    const mine = overview.body.products.find((p: any) => p.partNumber === PART)
    expect(mine.inForce.revision).toBe(2)
    expect(mine.drafts).toEqual([])
  })

  it('a revision approved for a later time leaves the current one in force until then', async () => {
    const r = await call('POST', `/api/products/${PART}/revisions`, { cookie: cookies.engineer })
    const later = new Date(Date.now() + 86_400_000).toISOString()
    expect((await call('POST', `/api/revisions/${r.body.id}/approve`, { cookie: cookies.quality, body: { effectiveAt: later } })).status).toBe(200)
    const list = await call('GET', `/api/products/${PART}/revisions`, { cookie: cookies.engineer })
    expect(list.body.revisions.map((x: any) => [x.revision, x.status, x.inForce, x.pending])).toEqual([
      [3, 'approved', false, true], [2, 'superseded', true, false], [1, 'superseded', false, false],
    ])
    expect((await call('GET', `/api/products/${PART}/spec`, { cookie: cookies.engineer })).body.revision.revision).toBe(2)
  })
})

describe('lots', () => {
  const LOT = `T3-SP-${tag}`.slice(0, 32)
  const token = () => stationTokens()['ATE-T3-01']!
  const serials: Record<string, string> = {}

  const post = (body: unknown) => call('POST', '/api/v1/runs', { body, token: token() })
  const failingPower = (run: any) => ({ ...run, stationVerdict: 'fail', measurements: run.measurements.map((m: any) => m.name === 'output_power' ? { ...m, value: 4 } : m) })

  beforeAll(async () => {
    for (let i = 0; i < 5; i++) {
      serials[`pass${i}`] = uniqueSerial(`P${i}`)
      expect((await post(tripleRun({ lot: LOT, serial: serials[`pass${i}`] }))).status).toBe(201)
    }
    serials.fail = uniqueSerial('F')
    expect((await post(failingPower(tripleRun({ lot: LOT, serial: serials.fail })))).status).toBe(201)
    serials.retest = uniqueSerial('R')
    expect((await post(failingPower(tripleRun({ lot: LOT, serial: serials.retest })))).status).toBe(201)
    expect((await post(tripleRun({ lot: LOT, serial: serials.retest }))).status).toBe(201)
    // a serial that a spreadsheet would read as a formula
    serials.formula = `-${uniqueSerial('X')}`
    const tune = tripleRun({ lot: LOT, serial: serials.formula, step: 'tune', measurements: [{ name: 'output_power', value: 7, unit: 'dBm' }] })
    expect((await post(tune)).status).toBe(201)
  })

  it('shows the lot with its product, status and counts', async () => {
    const r = await call('GET', `/api/lots/${LOT}`, { cookie: cookies.operator })
    expect(r.status).toBe(200)
    expect(r.body.lot).toMatchObject({ code: LOT, status: 'open', holdReason: null, product: { partNumber: 'VFW-T3-375' } })
    expect(r.body.lot.counts).toMatchObject({ planned: null, units: 8, completed: 7, passed: 6, failed: 1, inProgress: 1, retested: 1 })
    expect((await call('GET', '/api/lots/NO-SUCH-LOT', { cookie: cookies.operator })).status).toBe(404)
  })

  it('pages, sorts and filters the units on the server', async () => {
    const page1 = await call('GET', `/api/lots/${LOT}/units?pageSize=3&sort=serial&dir=asc`, { cookie: cookies.engineer })
    expect(page1.status).toBe(200)
    expect(page1.body).toMatchObject({ total: 8, page: 1, pageSize: 3, pageCount: 3 })
    const all = await call('GET', `/api/lots/${LOT}/units?pageSize=200&sort=serial&dir=asc`, { cookie: cookies.engineer })
    const sorted = [...all.body.units.map((u: any) => u.serial)].sort()
    expect(all.body.units.map((u: any) => u.serial)).toEqual(sorted)
    expect(page1.body.units.map((u: any) => u.serial)).toEqual(sorted.slice(0, 3))
    const page3 = await call('GET', `/api/lots/${LOT}/units?pageSize=3&page=3&sort=serial&dir=desc`, { cookie: cookies.engineer })
    expect(page3.body.units.map((u: any) => u.serial)).toEqual([...sorted].reverse().slice(6))

    const fails = await call('GET', `/api/lots/${LOT}/units?verdict=fail`, { cookie: cookies.engineer })
    expect(fails.body.units.map((u: any) => u.serial)).toEqual([serials.fail])
    const retested = await call('GET', `/api/lots/${LOT}/units?minAttempts=2`, { cookie: cookies.engineer })
    expect(retested.body.units).toEqual([expect.objectContaining({ serial: serials.retest, verdict: 'pass', firstPass: false, maxAttempts: 2, runs: 2, station: 'ATE-T3-01' })])
    const incomplete = await call('GET', `/api/lots/${LOT}/units?verdict=incomplete`, { cookie: cookies.engineer })
    expect(incomplete.body.units.map((u: any) => [u.serial, u.lastStep])).toEqual([[serials.formula, 'tune']])
    const bySerial = await call('GET', `/api/lots/${LOT}/units?serial=${encodeURIComponent(serials.pass3!.slice(0, 4))}`, { cookie: cookies.engineer })
    expect(bySerial.body.units.map((u: any) => u.serial)).toEqual([serials.pass3])
    const byStation = await call('GET', `/api/lots/${LOT}/units?station=ATE-D2-01`, { cookie: cookies.engineer })
    expect(byStation.body.total).toBe(0)
    const future = await call('GET', `/api/lots/${LOT}/units?from=${new Date(Date.now() + 3600_000).toISOString()}`, { cookie: cookies.engineer })
    expect(future.body.total).toBe(0)
    const byAttempts = await call('GET', `/api/lots/${LOT}/units?sort=attempts&dir=desc&pageSize=1`, { cookie: cookies.engineer })
    expect(byAttempts.body.units[0].serial).toBe(serials.retest)
  })

  it('refuses bad list parameters with pointers', async () => {
    const r = await call('GET', `/api/lots/${LOT}/units?pageSize=5000&sort=colour&verdict=maybe`, { cookie: cookies.engineer })
    expect(r.status).toBe(400)
    expect(r.body.errors.map((e: any) => e.pointer)).toEqual(['/query/pageSize', '/query/sort', '/query/verdict'])
  })

  it('exports the filtered units as CSV with formula-looking cells escaped', async () => {
    const r = await csv('GET', `/api/lots/${LOT}/units.csv?sort=serial`, cookies.operator)
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toContain('text/csv')
    const lines = r.text.trim().split('\r\n')
    expect(lines[0]).toBe('serial,verdict,first_pass,steps_tested,last_step,max_attempts,runs,station,last_tested_at')
    expect(lines).toHaveLength(9)
    expect(r.text).toContain(`\r\n'${serials.formula},incomplete,`)
    expect(lines.slice(1).every((l) => !/^[=+\-@]/.test(l))).toBe(true)
    const failed = await csv('GET', `/api/lots/${LOT}/units.csv?verdict=fail`, cookies.operator)
    expect(failed.text.trim().split('\r\n').slice(1).map((l) => l.split(',')[0])).toEqual([serials.fail])
  })

  it('walks hold → resume → release and refuses every other transition with 409; there is no manual ship', async () => {
    const act = (who: keyof typeof cookies, action: string, body?: unknown) => call('POST', `/api/lots/${LOT}/${action}`, { cookie: cookies[who], body })
    expect((await act('quality', 'resume')).status).toBe(409)
    // a lot ships with its units' shipments, never by hand
    expect((await act('quality', 'ship')).status).toBe(404)
    expect((await act('engineer', 'hold', {})).status).toBe(400)
    const held = await act('engineer', 'hold', { reason: 'Harmonic rejection drifting on bay 2' })
    expect(held.status).toBe(200)
    expect(held.body.status).toBe('on_hold')
    expect((await call('GET', `/api/lots/${LOT}`, { cookie: cookies.operator })).body.lot).toMatchObject({ status: 'on_hold', holdReason: 'Harmonic rejection drifting on bay 2' })
    expect((await act('quality', 'hold', { reason: 'again' })).status).toBe(409)
    const refused = await act('quality', 'release')
    expect(refused.status).toBe(409)
    expect(refused.body.detail).toMatch(/lift the hold/)
    expect((await act('engineer', 'release')).status).toBe(403)
    expect((await act('quality', 'resume')).body.status).toBe('open')
    // no unit of this lot went through tune, burn-in and final with passes: a plain release is refused, unit by unit
    expect((await call('GET', `/api/lots/${LOT}`, { cookie: cookies.quality })).body.lot.readiness).toEqual({ units: 8, notReady: 8 })
    const notReady = await act('quality', 'release')
    expect(notReady.status).toBe(409)
    expect(notReady.body).toMatchObject({ notReady: 8, units: 8 })
    const problems = new Map(notReady.body.notReadyUnits.map((u: any) => [u.serial, u.problems]))
    expect(problems.get(serials.fail)).toEqual(['no result at tune', 'no result at burn-in', 'latest final result is a fail'])
    expect(problems.get(serials.formula)).toEqual(['no result at burn-in', 'no result at final'])
    expect((await act('quality', 'release', { deviation: 'x' })).status).toBe(400)
    expect((await act('quality', 'release', { deviation: 'Engineering samples for the customer\'s lab, by agreement' })).body.status).toBe('released')
    expect((await act('quality', 'release')).status).toBe(409)
    const released = (await call('GET', `/api/lots/${LOT}`, { cookie: cookies.operator })).body.lot
    expect(released).toMatchObject({ status: 'released', holdReason: null, releasedBy: { name: 'Rosa Fenwright' }, runsSinceRelease: 0 })
    // a run that arrives after the release is counted for quality to review
    expect((await post(tripleRun({ lot: LOT, serial: serials.pass0 }))).status).toBe(201)
    expect((await call('GET', `/api/lots/${LOT}`, { cookie: cookies.operator })).body.lot.runsSinceRelease).toBe(1)
    expect((await act('quality', 'resume')).status).toBe(409)
    const audit = await call('GET', `/api/audit?entity=lot&entityId=${LOT}`, { cookie: cookies.quality })
    expect(audit.body.entries.map((e: any) => e.action)).toEqual(['release', 'resume', 'hold'])
    expect(audit.body.entries[1].after.liftedReason).toBe('Harmonic rejection drifting on bay 2')
    expect(audit.body.entries[0].after.signed).toMatchObject({ method: 'recent-sign-in' })
    expect(audit.body.entries[0].after.deviation).toMatchObject({ reason: 'Engineering samples for the customer\'s lab, by agreement', notReady: 8, units: 8 })
    expect([...audit.body.entries[0].after.deviation.serials].sort()).toEqual(Object.values(serials).sort())
  })

  it('releases a lot whose every unit passed every step without a deviation', async () => {
    const lot = `T3-RD-${tag}`.slice(0, 32)
    const serial = uniqueSerial('OK')
    const t0 = Date.now() - 3_600_000
    const at = (min: number) => ({ startedAt: new Date(t0 + min * 60_000).toISOString(), finishedAt: new Date(t0 + min * 60_000 + 30_000).toISOString() })
    expect((await post(tripleRun({ lot, serial, step: 'tune', ...at(0), measurements: [{ name: 'output_power', value: 7, unit: 'dBm' }] }))).body.verdict).toBe('pass')
    expect((await post(tripleRun({ lot, serial, step: 'burn-in', ...at(5), measurements: [{ name: 'output_power', value: 7, unit: 'dBm' }, { name: 'supply_current', value: 78, unit: 'mA' }] }))).body.verdict).toBe('pass')
    expect((await post(tripleRun({ lot, serial, ...at(10) }))).body.verdict).toBe('pass')
    expect((await call('GET', `/api/lots/${lot}`, { cookie: cookies.quality })).body.lot.readiness).toEqual({ units: 1, notReady: 0 })
    const released = await call('POST', `/api/lots/${lot}/release`, { cookie: cookies.quality, body: {} })
    expect(released.status, JSON.stringify(released.body)).toBe(200)
    expect(released.body.status).toBe('released')
    const audit = await call('GET', `/api/audit?entity=lot&entityId=${lot}`, { cookie: cookies.quality })
    expect(audit.body.entries[0].action).toBe('release')
    expect(audit.body.entries[0].after.deviation).toBeUndefined()
    expect((await call('GET', `/api/lots/${lot}`, { cookie: cookies.quality })).body.lot.readiness).toBeNull()
  })
})

describe('audit log', () => {
  it('pages newest first and filters by user and time', async () => {
    const first = await call('GET', '/api/audit?pageSize=2', { cookie: cookies.admin })
    expect(first.status).toBe(200)
    expect(first.body.entries).toHaveLength(2)
    expect(first.body.total).toBeGreaterThan(2)
    expect(new Date(first.body.entries[0].at).getTime()).toBeGreaterThanOrEqual(new Date(first.body.entries[1].at).getTime())
    const qualityId = first.body.facets.users.find((u: any) => u.email === ROLE_ACCOUNTS.quality).id
    const byQuality = await call('GET', `/api/audit?user=${qualityId}&pageSize=200`, { cookie: cookies.admin })
    expect(byQuality.body.entries.length).toBeGreaterThan(0)
    expect(byQuality.body.entries.every((e: any) => e.user?.id === qualityId)).toBe(true)
    const none = await call('GET', `/api/audit?from=${new Date(Date.now() + 3600_000).toISOString()}`, { cookie: cookies.admin })
    expect(none.body.total).toBe(0)
    expect((await call('GET', '/api/audit?from=yesterday', { cookie: cookies.admin })).status).toBe(400)
  })

  it('offers no way to change or delete audit rows', async () => {
    for (const method of ['PUT', 'PATCH', 'DELETE']) {
      const r = await call(method, '/api/audit', { cookie: cookies.admin, body: {} })
      expect(r.status).toBe(404)
    }
  })
})
