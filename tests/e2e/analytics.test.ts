import jStat from 'jstat'
import { mean as ssMean, quantileSorted, sampleStandardDeviation, sampleVariance } from 'simple-statistics'
import { beforeAll, describe, expect, it } from 'vitest'
import { rmsJitterSeconds } from '../../shared/utils/jitter'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const tokens = stationTokens()
const STATION_A = 'ATE-T3-01'
const STATION_B = 'ATE-T3-02'
const LOT = `T3-AN-${Date.now().toString(36)}`
const OFFSETS = [100, 1000, 10000, 100000, 1000000]
const MASK = [-114, -134, -144, -149, -151]

// Output power in test order per station: A is centred near 7.0 dBm, B reads about 0.4 dB high.
const POWER_A = [6.91, 7.12, 6.85, 7.04, 6.97, 7.2, 6.88]
const POWER_B = [7.41, 7.33, 7.52, 7.38, 7.46]
const ALL_POWER = [...POWER_A, ...POWER_B]

type Posted = { serial: string; station: string; power: number; pn: number[]; finishedAt: string }
const posted: Posted[] = []

function phaseNoiseFor(i: number): number[] {
  // a different spread per offset so the percentiles do not coincide
  return [-117 - 0.3 * ((i * 7) % 12), -137 - 0.2 * ((i * 5) % 12), -147 - 0.1 * ((i * 11) % 12), -152 - 0.25 * ((i * 3) % 12), -154 - 0.15 * i]
}

let cookies: Record<'engineer' | 'operator' | 'customer', string>

async function postRun(station: string, power: number, i: number, startedAt: Date) {
  const pn = phaseNoiseFor(i)
  const serial = uniqueSerial('AN')
  const run = tripleRun({
    serial, lot: LOT, startedAt: startedAt.toISOString(), finishedAt: new Date(startedAt.getTime() + 50_000).toISOString(),
    measurements: [
      { name: 'output_power', value: power, unit: 'dBm', uncertainty: 0.1 },
      { name: 'output_frequency', value: 375_000_150, unit: 'Hz' },
      { name: 'harmonic_rejection', harmonic: 1, value: 38, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 2, value: 33, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 4, value: 45, unit: 'dB' },
      { name: 'supply_current', value: 78, unit: 'mA' },
      ...OFFSETS.map((offsetHz, k) => ({ name: 'phase_noise', offsetHz, value: pn[k], unit: 'dBc/Hz', uncertainty: 0.2 })),
    ],
  })
  const r = await call('POST', '/api/v1/runs', { body: run, token: tokens[station] })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  posted.push({ serial, station, power, pn, finishedAt: run.finishedAt })
  return r.body
}

beforeAll(async () => {
  cookies = {
    engineer: await signIn(ROLE_ACCOUNTS.engineer),
    operator: await signIn(ROLE_ACCOUNTS.operator),
    customer: await signIn(ROLE_ACCOUNTS.customer),
  }
  const base = Date.now() - 3_600_000
  // interleaved, each station's values in its own test order
  let a = 0
  let b = 0
  for (let i = 0; i < ALL_POWER.length; i++) {
    const useA = a < POWER_A.length && (i % 2 === 0 || b >= POWER_B.length)
    const t = new Date(base + i * 120_000)
    if (useA) await postRun(STATION_A, POWER_A[a++]!, i, t)
    else await postRun(STATION_B, POWER_B[b++]!, i, t)
  }
})

const get = (path: string, who: keyof typeof cookies = 'engineer') => call('GET', path, { cookie: cookies[who] })

/** Within sigma from moving ranges inside each station's own sequence, pooled: MR̄/d2 with d2 = 2/√π. */
function pooledSigmaWithin(seqs: number[][]): number {
  let sum = 0
  let count = 0
  for (const s of seqs) for (let i = 1; i < s.length; i++) { sum += Math.abs(s[i]! - s[i - 1]!); count++ }
  return sum / count / (2 / Math.sqrt(Math.PI))
}

describe('GET /api/stations/compare', () => {
  it('gives each station the mean and σ of its own values, the bias against the pooled mean and a Welch p-value', async () => {
    const r = await get(`/api/stations/compare?part=VFW-T3-375&name=output_power&step=final&lot=${LOT}`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.parameter).toMatchObject({ name: 'output_power', step: 'final', unit: 'dBm', lsl: 5.5, usl: 8.5, target: 7 })
    expect(r.body.stations.map((s: any) => s.station)).toEqual([STATION_A, STATION_B])
    const pooledMean = ssMean(ALL_POWER)
    expect(r.body.pooled.n).toBe(ALL_POWER.length)
    expect(r.body.pooled.mean).toBeCloseTo(pooledMean, 10)
    expect(r.body.pooled.sigmaOverall).toBeCloseTo(sampleStandardDeviation(ALL_POWER), 10)

    for (const [name, values, others] of [[STATION_A, POWER_A, POWER_B], [STATION_B, POWER_B, POWER_A]] as const) {
      const s = r.body.stations.find((x: any) => x.station === name)
      expect(s.n).toBe(values.length)
      expect(s.mean).toBeCloseTo(ssMean([...values]), 10)
      expect(s.sigma).toBeCloseTo(sampleStandardDeviation([...values]), 10)
      expect(s.min).toBe(Math.min(...values))
      expect(s.max).toBe(Math.max(...values))
      expect(s.bias).toBeCloseTo(ssMean([...values]) - pooledMean, 10)
      // Welch by hand, p from jstat's t distribution
      const va = sampleVariance([...values]) / values.length
      const vb = sampleVariance([...others]) / others.length
      const t = (ssMean([...values]) - ssMean([...others])) / Math.sqrt(va + vb)
      const df = (va + vb) ** 2 / (va ** 2 / (values.length - 1) + vb ** 2 / (others.length - 1))
      expect(s.welch.t).toBeCloseTo(t, 9)
      expect(s.welch.df).toBeCloseTo(df, 9)
      expect(s.welch.p).toBeCloseTo(2 * (1 - jStat.studentt.cdf(Math.abs(t), df)), 9)
    }
    // fewer units on B, so B sits further from the pooled mean
    expect(r.body.stations.find((x: any) => x.station === STATION_B).largestBias).toBe(true)
    expect(r.body.stations.find((x: any) => x.station === STATION_A).largestBias).toBe(false)
  })

  it('across all lots of the part it pools each station over lots, so the counts include the demo history', async () => {
    const r = await get('/api/stations/compare?part=VFW-T3-375&name=output_power&step=final')
    expect(r.status).toBe(200)
    const a = r.body.stations.find((x: any) => x.station === STATION_A)
    expect(a.n).toBeGreaterThan(POWER_A.length)
    expect(r.body.pooled.n).toBe(r.body.stations.reduce((s: number, x: any) => s + x.n, 0))
    expect(r.body.stations.filter((x: any) => x.largestBias)).toHaveLength(1)
  })

  it('refuses a lot of another part and an incomplete query as problems', async () => {
    const other = await get('/api/stations/compare?part=VFW-D2-250&name=output_power&step=final&lot=' + LOT)
    expect(other.status).toBe(400)
    expect(other.headers.get('content-type')).toContain('application/problem+json')
    const missing = await get('/api/stations/compare?part=VFW-T3-375')
    expect(missing.status).toBe(400)
    expect(missing.body.errors.map((e: any) => e.pointer)).toContain('/name')
    const qualified = await get('/api/stations/compare?part=VFW-T3-375&name=phase_noise')
    expect(qualified.status).toBe(400)
    expect(qualified.body.errors.map((e: any) => e.pointer)).toContain('/qualifier')
    expect((await get('/api/stations/compare?part=NO-SUCH-PART&name=output_power')).status).toBe(404)
    expect((await get('/api/stations/compare?part=VFW-T3-375&name=output_power&lot=NO-SUCH-LOT')).status).toBe(404)
  })
})

describe('GET /api/trends', () => {
  it('lists the fresh lot with n, mean, σ and, under its one revision, a Cpk from the pooled moving ranges', async () => {
    const r = await get('/api/trends?part=VFW-T3-375&name=output_power&step=final')
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const lot = r.body.lots.find((l: any) => l.code === LOT)
    expect(lot).toBeDefined()
    expect(lot.n).toBe(ALL_POWER.length)
    expect(lot.mean).toBeCloseTo(ssMean(ALL_POWER), 10)
    expect(lot.sigma).toBeCloseTo(sampleStandardDeviation(ALL_POWER), 10)
    const sw = pooledSigmaWithin([POWER_A, POWER_B])
    expect(lot.sigmaWithin).toBeCloseTo(sw, 10)
    // every run of the lot was judged by the demo revision 1 (LSL 5.5, USL 8.5): one capability entry
    expect(lot.capability).toHaveLength(1)
    const c = lot.capability[0]
    expect(c).toMatchObject({ revision: 1, lsl: 5.5, usl: 8.5, n: ALL_POWER.length, outOfSpec: 0 })
    expect(c.sigmaWithin).toBeCloseTo(sw, 10)
    const m = ssMean(ALL_POWER)
    const cpk = Math.min(8.5 - m, m - 5.5) / (3 * sw)
    expect(c.cpk).toBeCloseTo(cpk, 9)
    // Bissell (1990) interval on Cpk, z from jstat
    const z = jStat.normal.inv(0.975, 0, 1)
    const se = Math.sqrt(1 / (9 * ALL_POWER.length) + cpk ** 2 / (2 * (ALL_POWER.length - 1)))
    expect(c.intervals.cpk[0]).toBeCloseTo(cpk - z * se, 8)
    // fewer than 30 values are not banded (common-practice floor, from memory)
    expect(c.band).toBe(ALL_POWER.length < 30 ? 'too_few' : cpk >= 1.33 ? 'capable' : cpk >= 1 ? 'marginal' : 'not_capable')
    expect(lot.firstRunAt < lot.lastRunAt).toBe(true)
  })

  it('orders the lots, draws individuals limits from the lot means and fits a slope through them', async () => {
    const r = await get('/api/trends?part=VFW-T3-375&name=output_power&step=final')
    const codes = r.body.lots.map((l: any) => l.code)
    expect(codes).toContain('T3-2611-A')
    expect(codes).toContain('T3-2612-B')
    // the demo lots were opened before any lot this test created
    expect(codes.indexOf('T3-2611-A')).toBeLessThan(codes.indexOf(LOT))
    const means = r.body.lots.map((l: any) => l.mean)
    let mr = 0
    for (let i = 1; i < means.length; i++) mr += Math.abs(means[i] - means[i - 1])
    const sigma = mr / (means.length - 1) / (2 / Math.sqrt(Math.PI))
    expect(r.body.acrossLots.centre).toBeCloseTo(ssMean(means), 10)
    expect(r.body.acrossLots.ucl).toBeCloseTo(ssMean(means) + 3 * sigma, 10)
    for (const l of r.body.lots) expect(l.beyondLimits).toBe(l.mean > r.body.acrossLots.ucl || l.mean < r.body.acrossLots.lcl)
    // least squares slope against the lot index
    const xs = means.map((_: number, i: number) => i)
    const mx = ssMean(xs)
    const my = ssMean(means)
    const slope = xs.reduce((s: number, x: number, i: number) => s + (x - mx) * (means[i] - my), 0) / xs.reduce((s: number, x: number) => s + (x - mx) ** 2, 0)
    expect(r.body.drift.slopePerLot).toBeCloseTo(slope, 10)
    expect(r.body.drift.n).toBe(means.length)
  })

  it('keeps only lots tested within from..to', async () => {
    const future = new Date(Date.now() + 86_400_000).toISOString().slice(0, 10)
    const r = await get(`/api/trends?part=VFW-T3-375&name=output_power&step=final&from=${future}`)
    expect(r.status).toBe(200)
    expect(r.body.lots).toEqual([])
    const today = new Date().toISOString().slice(0, 10)
    // the runs started up to an hour ago: just after midnight UTC that is yesterday
    const since = new Date(Date.now() - 2 * 3_600_000).toISOString().slice(0, 10)
    const t = await get(`/api/trends?part=VFW-T3-375&name=output_power&step=final&from=${since}&to=${today}`)
    expect(t.body.lots.map((l: any) => l.code)).toContain(LOT)
    const bad = await get('/api/trends?part=VFW-T3-375&name=output_power&from=yesterday')
    expect(bad.status).toBe(400)
    expect(bad.body.errors.map((e: any) => e.pointer)).toContain('/from')
  })

  it('is readable by an operator and refused to a customer', async () => {
    expect((await get('/api/trends?part=VFW-T3-375&name=output_power', 'operator')).status).toBe(200)
    const c = await get('/api/trends?part=VFW-T3-375&name=output_power', 'customer')
    expect(c.status).toBe(403)
    expect(c.headers.get('content-type')).toContain('application/problem+json')
  })
})

describe('GET /api/lots/:code/phase-noise', () => {
  it('gives median, p10 and p90 per offset within their bin width of the type-7 quantiles of the posted values, against the mask', async () => {
    const r = await get(`/api/lots/${LOT}/phase-noise?step=final`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.offsets.map((o: any) => o.offsetHz)).toEqual(OFFSETS)
    OFFSETS.forEach((f, k) => {
      const sorted = posted.map((p) => p.pn[k]!).sort((a, b) => a - b)
      const o = r.body.offsets[k]
      expect(o.n).toBe(posted.length)
      expect([o.min, o.max]).toEqual([sorted[0], sorted.at(-1)])
      // read from counts kept in bins of width `resolution`, a small part of the spread
      expect(o.resolution).toBeLessThanOrEqual(Math.max((sorted.at(-1)! - sorted[0]!) / 128, 1e-12))
      expect(Math.abs(o.median - quantileSorted(sorted, 0.5))).toBeLessThanOrEqual(o.resolution)
      expect(Math.abs(o.p10 - quantileSorted(sorted, 0.1))).toBeLessThanOrEqual(o.resolution)
      expect(Math.abs(o.p90 - quantileSorted(sorted, 0.9))).toBeLessThanOrEqual(o.resolution)
      expect(o.usl).toBe(MASK[k])
    })
    // one revision judged these runs: the view names it and offers no other
    expect(r.body.revision).toBe(1)
    expect(r.body.revisions.map((x: any) => [x.revision, x.n])).toEqual([[1, posted.length]])
  })

  it('spreads the derived jitter (seconds) over histogram bins and percentiles', async () => {
    const r = await get(`/api/lots/${LOT}/phase-noise`)
    const expected = posted.map((p) => rmsJitterSeconds(OFFSETS.map((f, k) => [f, p.pn[k]!] as const), 1e3, 1e6, 375e6).jitterS).sort((a, b) => a - b)
    const j = r.body.jitter
    expect(j.unit).toBe('s')
    expect(j.n).toBe(posted.length)
    expect(j.usl).toBe(40e-15)
    expect(Math.abs(j.percentiles.p50 - quantileSorted(expected, 0.5))).toBeLessThanOrEqual(j.resolution + 1e-9 * expected.at(-1)!)
    expect(j.min / expected[0]!).toBeCloseTo(1, 9)
    expect(j.histogram.counts.reduce((s: number, c: number) => s + c, 0)).toBe(posted.length)
    expect(j.histogram.edges).toHaveLength(j.histogram.counts.length + 1)
    // edges on the bins' grid: the first bar opens at or below the smallest value
    expect(j.histogram.edges[0]).toBeLessThanOrEqual(j.min)
    expect(j.histogram.edges[1]).toBeGreaterThan(j.min)
  })

  it('answers 404 for an unknown lot and 400 for a step the part does not have', async () => {
    const missing = await get('/api/lots/NO-SUCH-LOT/phase-noise')
    expect(missing.status).toBe(404)
    expect(missing.headers.get('content-type')).toContain('application/problem+json')
    expect((await get(`/api/lots/${LOT}/phase-noise?step=packing`)).status).toBe(400)
    expect((await get(`/api/lots/${LOT}/phase-noise`, 'customer')).status).toBe(403)
  })
})

type SseEvent = { event: string; data: any; id?: string }

/** Reads server-sent events from a fetch body until `until` returns true or the time runs out. */
async function readEvents(reader: ReadableStreamDefaultReader<Uint8Array>, state: { buffer: string; events: SseEvent[]; comments: number }, until: () => boolean, ms: number) {
  const decoder = new TextDecoder()
  const deadline = Date.now() + ms
  while (!until()) {
    const left = deadline - Date.now()
    if (left <= 0) return false
    const chunk = await Promise.race([reader.read(), new Promise<null>((r) => setTimeout(() => r(null), left))])
    if (chunk === null) return false
    if (chunk.done) return until()
    state.buffer += decoder.decode(chunk.value, { stream: true })
    let cut: number
    while ((cut = state.buffer.indexOf('\n\n')) >= 0) {
      const block = state.buffer.slice(0, cut)
      state.buffer = state.buffer.slice(cut + 2)
      const e: Partial<SseEvent> & { dataLines: string[] } = { dataLines: [] }
      let comment = false
      for (const line of block.split('\n')) {
        if (line.startsWith(':')) comment = true
        else if (line.startsWith('event:')) e.event = line.slice(6).trim()
        else if (line.startsWith('data:')) e.dataLines.push(line.slice(5).trimStart())
        else if (line.startsWith('id:')) e.id = line.slice(3).trim()
      }
      if (comment && !e.dataLines.length) { state.comments++; continue }
      if (e.dataLines.length) state.events.push({ event: e.event ?? 'message', data: JSON.parse(e.dataLines.join('\n')), id: e.id })
    }
  }
  return true
}

describe('floor', () => {
  it('GET /api/floor/snapshot shows the stations with their latest run and the open lot with its first-pass count', async () => {
    const r = await get('/api/floor/snapshot', 'operator')
    expect(r.status).toBe(200)
    const lastOnB = [...posted].reverse().find((p) => p.station === STATION_B)!
    const b = r.body.stations.find((s: any) => s.name === STATION_B)
    // other test files may post later runs on the same demo station: the last shown is at least as late as ours
    if (b.lastRun.serial !== lastOnB.serial) expect(new Date(b.lastRun.finishedAt).getTime()).toBeGreaterThan(new Date(lastOnB.finishedAt).getTime())
    expect(b.runsToday).toBeGreaterThanOrEqual(POWER_B.length)
    const lot = r.body.lots.find((l: any) => l.code === LOT)
    expect(lot.status).toBe('open')
    const final = lot.steps.find((s: any) => s.step === 'final')
    expect(final.units).toBe(ALL_POWER.length)
    expect(final.firstPass).toBe(ALL_POWER.length)
    expect(final.firstPassYield.p).toBe(1)
    expect(r.body.recent.length).toBeGreaterThan(0)
    expect(r.body.lastRunId).toBe(Math.max(...r.body.recent.map((x: any) => x.id)))
    expect((await get('/api/floor/snapshot', 'customer')).status).toBe(403)
  })

  it('GET /api/floor/stream sends a snapshot, then the run posted after it, then the updated lot yields', async () => {
    const controller = new AbortController()
    const res = await fetch(baseUrl() + '/api/floor/stream', { headers: { cookie: cookies.operator, accept: 'text/event-stream' }, signal: controller.signal })
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toContain('text/event-stream')
    const reader = res.body!.getReader()
    const state = { buffer: '', events: [] as SseEvent[], comments: 0 }
    try {
      expect(await readEvents(reader, state, () => state.events.some((e) => e.event === 'snapshot'), 10_000)).toBe(true)
      const snapshot = state.events.find((e) => e.event === 'snapshot')!.data
      expect(snapshot.stations.map((s: any) => s.name)).toContain(STATION_A)

      const fresh = await postRun(STATION_A, 6.95, posted.length, new Date(Date.now() - 60_000))
      const gotRun = await readEvents(reader, state, () => state.events.some((e) => e.event === 'run' && e.data.serial === fresh.serial), 10_000)
      expect(gotRun).toBe(true)
      const run = state.events.find((e) => e.event === 'run' && e.data.serial === fresh.serial)!
      expect(run.data).toMatchObject({ serial: fresh.serial, part: 'VFW-T3-375', lot: LOT, station: STATION_A, step: 'final', attempt: 1, verdict: fresh.verdict })
      // the event id is the feed's position (received at, then id): here the run's own, past the snapshot's
      expect(run.id).toBe(`${Date.parse(run.data.receivedAt)}.${run.data.id}`)
      const [snapAt, snapId] = state.events.find((e) => e.event === 'snapshot')!.id!.split('.').map(Number)
      expect(Date.parse(run.data.receivedAt) > snapAt! || (Date.parse(run.data.receivedAt) === snapAt && run.data.id > snapId!)).toBe(true)

      const gotLots = await readEvents(reader, state, () => state.events.some((e) => e.event === 'lots' && e.data.lots.some((l: any) => l.code === LOT && l.steps.find((s: any) => s.step === 'final')?.units === ALL_POWER.length + 1)), 10_000)
      expect(gotLots).toBe(true)
    } finally {
      controller.abort()
      await reader.cancel().catch(() => {})
    }
  })

  it('refuses the stream to a customer and to anonymous callers', async () => {
    expect((await fetch(baseUrl() + '/api/floor/stream', { headers: { cookie: cookies.customer } })).status).toBe(403)
    expect((await fetch(baseUrl() + '/api/floor/stream')).status).toBe(401)
  })
})
