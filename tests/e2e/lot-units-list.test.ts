// The lot's units list read by index: every sort in both directions against the same rows sorted here, the filters
// (verdict, station, serial prefix and the slower "contains"), pages from either end and by cursor, and the CSV
// holding every row once, in the list's order.
import { beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const LOT = `T3-UL-${tag}`.slice(0, 32)
let engineer = ''
type Unit = { serial: string; verdict: string; firstPass: boolean | null; stepsTested: number; lastStep: string | null; maxAttempts: number; runs: number; station: string | null; lastTestedAt: string | null }

const at = (minutes: number) => new Date(Date.now() - 86_400_000 + minutes * 60_000)
function run(serial: string, step: string, minutes: number, pass = true) {
  const started = at(minutes)
  const r: any = tripleRun({ lot: LOT, serial, step, startedAt: started.toISOString(), finishedAt: new Date(started.getTime() + 30_000).toISOString() })
  if (!pass) { r.stationVerdict = 'fail'; r.measurements = r.measurements.map((m: any) => (m.name === 'output_power' ? { ...m, value: 4 } : m)) }
  if (step !== 'final') r.measurements = [{ name: 'output_power', value: 7, unit: 'dBm' }]
  return r
}

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const tokens = stationTokens()
  const byStation: Record<string, any[]> = { 'ATE-T3-01': [], 'ATE-T3-02': [] }
  for (let u = 0; u < 23; u++) {
    // AB… and AC… serials for the prefix filter; a "." (never in the tag) inside some, for the contains filter
    const serial = `${u % 3 === 0 ? 'AC' : 'AB'}${tag}-${String(u).padStart(2, '0')}${u % 4 === 0 ? '.5' : ''}`
    const station = u % 2 ? 'ATE-T3-01' : 'ATE-T3-02'
    const list = byStation[station]!
    list.push(run(serial, 'tune', u * 10))
    if (u % 5 !== 1) list.push(run(serial, 'final', u * 10 + 3, u % 6 !== 2))
    if (u % 6 === 2 && u % 4 === 0) list.push(run(serial, 'final', u * 10 + 5))
  }
  for (const [station, runs] of Object.entries(byStation)) {
    const r = await call('POST', '/api/v1/runs/batch', { token: tokens[station]!, body: { runs } })
    expect(r.status).toBeLessThan(300)
  }
}, 60_000)

const list = (q: string) => call('GET', `/api/lots/${LOT}/units?${q}`, { cookie: engineer })

async function everyUnit(): Promise<Unit[]> {
  const r = await list('pageSize=200')
  expect(r.status).toBe(200)
  return r.body.units
}

const KEY: Record<string, (u: Unit) => string | number | null> = {
  serial: (u) => u.serial, verdict: (u) => u.verdict, attempts: (u) => u.maxAttempts, runs: (u) => u.runs, date: (u) => u.lastTestedAt, step: (u) => u.lastStep,
}
const cmp = (a: string | number | null, b: string | number | null) => (a === b ? 0 : a === null ? -1 : b === null ? 1 : a < b ? -1 : 1)

describe('the units list by index', () => {
  it('sorts by every column both ways, ties broken by serial the same way', async () => {
    const all = await everyUnit()
    expect(all).toHaveLength(23)
    for (const [sort, key] of Object.entries(KEY)) {
      for (const dir of ['asc', 'desc'] as const) {
        const expected = [...all].sort((a, b) => cmp(key(a), key(b)) || cmp(a.serial, b.serial)).map((u) => u.serial)
        if (dir === 'desc') expected.reverse()
        const r = await list(`sort=${sort}&dir=${dir}&pageSize=200`)
        expect(r.body.units.map((u: Unit) => u.serial), `${sort} ${dir}`).toEqual(expected)
      }
    }
    // by station: the units of one station together, in serial order within it
    const byStation = (await list('sort=station&pageSize=200')).body.units as Unit[]
    const runsOf = byStation.map((u) => u.station)
    expect(new Set(runsOf).size).toBe(2)
    expect(runsOf.findIndex((s) => s !== runsOf[0])).toBe(runsOf.filter((s) => s === runsOf[0]).length)
  })

  it('counts and filters by verdict, station and serial start, and by serial anywhere on request', async () => {
    const all = await everyUnit()
    const lot = (await call('GET', `/api/lots/${LOT}`, { cookie: engineer })).body.lot
    for (const v of ['pass', 'fail', 'incomplete']) {
      const r = await list(`verdict=${v}&pageSize=200`)
      expect(r.body.units.map((u: Unit) => u.serial)).toEqual(all.filter((u) => u.verdict === v).map((u) => u.serial))
      expect(r.body.total).toBe(all.filter((u) => u.verdict === v).length)
      expect(r.body.totalExact).toBe(true)
    }
    expect(lot.counts).toMatchObject({ units: 23, passed: all.filter((u) => u.verdict === 'pass').length, failed: all.filter((u) => u.verdict === 'fail').length })
    expect((await list('verdict=pass,fail')).body.total).toBe(all.filter((u) => u.verdict !== 'incomplete').length)
    const st = await list('station=ATE-T3-01&pageSize=200')
    expect(st.body.units.map((u: Unit) => u.serial)).toEqual(all.filter((u) => u.station === 'ATE-T3-01').map((u) => u.serial))
    expect((await list('station=NO-SUCH-STATION')).body.total).toBe(0)
    expect(st.body.stations).toEqual(['ATE-T3-01', 'ATE-T3-02'])

    const prefix = await list(`serial=AC${tag}&pageSize=200`)
    expect(prefix.body.units.map((u: Unit) => u.serial)).toEqual(all.filter((u) => u.serial.startsWith(`AC${tag}`)).map((u) => u.serial))
    expect(prefix.body.total).toBe(8)
    // "." starts no serial, but is inside some
    expect((await list('serial=.')).body.total).toBe(0)
    const contains = await list('serial=.&serialMatch=contains&pageSize=200')
    expect(contains.body.units.map((u: Unit) => u.serial)).toEqual(all.filter((u) => u.serial.includes('.')).map((u) => u.serial))
    expect(contains.body.total).toBe(6)
    // LIKE's wildcards are plain characters here
    expect((await list('serial=A_&serialMatch=contains')).body.total).toBe(0)
    expect((await list('serial=%25')).body.total).toBe(0)
  })

  it('pages from both ends and by cursor to the same rows', async () => {
    const all = (await everyUnit()).map((u) => u.serial)
    for (const dir of ['asc', 'desc'] as const) {
      const expected = dir === 'asc' ? all : [...all].reverse()
      const pages: string[] = []
      for (let page = 1; page <= 5; page++) {
        const r = await list(`sort=serial&dir=${dir}&pageSize=5&page=${page}`)
        expect(r.body.pageCount).toBe(5)
        pages.push(...r.body.units.map((u: Unit) => u.serial))
      }
      expect(pages).toEqual(expected)
      const byCursor: string[] = []
      let after: string | null = null
      for (let k = 0; k < 10; k++) {
        const r: any = await list(`sort=date&dir=${dir}&pageSize=4${after ? `&after=${after}` : ''}`)
        byCursor.push(...r.body.units.map((u: Unit) => u.serial))
        after = r.body.next
        if (!after) break
      }
      const byDate = (await list(`sort=date&dir=${dir}&pageSize=200`)).body.units.map((u: Unit) => u.serial)
      expect(byCursor).toEqual(byDate)
    }
    // every sort the page offers, filtered or not: pages by number (near pages counted off from the start, far ones
    // from the end) put together give the whole list in that order
    for (const sort of ['verdict', 'attempts', 'runs', 'station', 'date', 'step'] as const) {
      for (const [dir, filter] of [['asc', ''], ['desc', ''], ['asc', '&verdict=pass,incomplete']] as const) {
        const whole = (await list(`sort=${sort}&dir=${dir}${filter}&pageSize=200`)).body
        const paged: string[] = []
        const pageCount = Math.ceil(whole.total / 4)
        for (let page = 1; page <= pageCount; page++) paged.push(...(await list(`sort=${sort}&dir=${dir}${filter}&pageSize=4&page=${page}`)).body.units.map((u: Unit) => u.serial))
        expect(paged, `${sort} ${dir}${filter}`).toEqual(whole.units.map((u: Unit) => u.serial))
      }
    }
    const bad = await list('sort=date&after=bm90LWEtY3Vyc29y')
    expect(bad.status).toBe(400)
    expect(bad.body.errors.map((e: any) => e.pointer)).toEqual(['/query/after'])
    expect((await list('serialMatch=middle')).status).toBe(400)
  })

  it('downloads every row of the list as CSV in its order, and answers an unknown lot with problem+json', async () => {
    const fetchCsv = async (path: string) => {
      const r = await fetch(baseUrl() + path, { headers: { cookie: engineer, accept: 'text/csv, application/json' } })
      return { status: r.status, type: r.headers.get('content-type') ?? '', text: await r.text() }
    }
    for (const q of ['sort=runs&dir=desc', 'sort=step&verdict=pass', `serial=AB${tag}`]) {
      const r = await fetchCsv(`/api/lots/${LOT}/units.csv?${q}`)
      expect(r.status).toBe(200)
      const lines = r.text.trimEnd().split('\r\n')
      expect(lines[0]).toBe('serial,verdict,first_pass,steps_tested,last_step,max_attempts,runs,station,last_tested_at')
      const listed = (await list(`${q}&pageSize=200`)).body.units.map((u: Unit) => u.serial)
      expect(lines.slice(1).map((l) => l.split(',')[0])).toEqual(listed)
    }
    const missing = await fetchCsv('/api/lots/NO-SUCH-LOT-UL/units.csv')
    expect(missing.status).toBe(404)
    expect(missing.type).toContain('application/problem+json')
  })
})
