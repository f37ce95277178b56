// The same set of runs, posted in many arrival orders through every way in (one by one, many at once, in batches,
// as an import), must leave the same record: unit histories, yield counters, capability and release readiness,
// each equal to a recount from the runs themselves by test time.
import { randomBytes } from 'node:crypto'
import fc from 'fast-check'
import { mean, min, max, sampleStandardDeviation } from 'simple-statistics'
import { beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

const STATIONS = ['ATE-T3-01', 'ATE-T3-02'] as const
const tokens = stationTokens()
const STEPS = ['tune', 'burn-in', 'final'] as const
const UNITS = 4

type Planned = { unit: number; step: (typeof STEPS)[number]; minute: number; seconds: number; power: number; station: 0 | 1; index: number }

// runs a week ago, minutes apart; few distinct minutes and durations, so ties on start and finish are common
const base = Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate() - 7, 8)

/** The fixed set: every unit at every step, one to three attempts, passing (7 dBm) or failing (12 dBm). */
function plannedRuns(): Planned[] {
  const runs: Planned[] = []
  let index = 0
  const rand = (() => { let a = 1234567; return () => ((a = (a * 1103515245 + 12345) % 2 ** 31) / 2 ** 31) })()
  for (let unit = 0; unit < UNITS; unit++) {
    STEPS.forEach((step, k) => {
      const attempts = 1 + Math.floor(rand() * 3)
      for (let a = 0; a < attempts; a++) {
        runs.push({
          unit, step, minute: k * 10 + Math.floor(rand() * 4), seconds: 60 + 30 * Math.floor(rand() * 2),
          power: rand() < 0.35 ? 12 : Math.round((6 + 2 * rand()) * 100) / 100, station: rand() < 0.5 ? 0 : 1, index: index++,
        })
      }
    })
  }
  return runs
}

const PLANNED = plannedRuns()

/** Station run ids keep the same order in every trial, so that ties on both times break the same way. */
const uuidOf = (trial: string, index: number) => `${trial}-0000-4000-8000-${index.toString(16).padStart(12, '0')}`

function bodyOf(trial: string, p: Planned) {
  const start = base + p.unit * 3_600_000 + p.minute * 60_000
  const run = tripleRun({
    id: uuidOf(trial, p.index), lot: `AO-${trial}`, serial: `AO-${trial}-${p.unit}`, step: p.step,
    startedAt: new Date(start).toISOString(), finishedAt: new Date(start + p.seconds * 1000).toISOString(),
  })
  const measurements = run.measurements.map((m) => (m.name === 'output_power' ? { ...m, value: p.power } : m))
  return { ...run, stationVerdict: p.power > 9 ? 'fail' : 'pass', measurements: p.step === 'final' ? measurements : measurements.filter((m) => m.name === 'output_power' || m.name === 'supply_current') }
}

type Mode = 'one by one' | 'many at once' | 'batches' | 'import'

let engineer = ''
beforeAll(async () => { engineer = await signIn(ROLE_ACCOUNTS.engineer) })

async function postAll(trial: string, order: number[], mode: Mode, cuts: number[]) {
  const runs = order.map((i) => PLANNED[i]!)
  const expectStored = (r: { status: number; body: any }) => expect([200, 201], JSON.stringify(r.body)).toContain(r.status)
  if (mode === 'one by one') {
    for (const p of runs) expectStored(await call('POST', '/api/v1/runs', { body: bodyOf(trial, p), token: tokens[STATIONS[p.station]] }))
  } else if (mode === 'many at once') {
    const replies = await Promise.all(runs.map((p) => call('POST', '/api/v1/runs', { body: bodyOf(trial, p), token: tokens[STATIONS[p.station]] })))
    replies.forEach(expectStored)
  } else if (mode === 'batches') {
    // a batch comes from one station: runs in arrival order, cut into batches wherever the station changes or a cut falls
    let batch: Planned[] = []
    const send = async () => {
      if (!batch.length) return
      const r = await call('POST', '/api/v1/runs/batch', { body: { runs: batch.map((p) => bodyOf(trial, p)) }, token: tokens[STATIONS[batch[0]!.station]] })
      expect(r.status).toBe(200)
      for (const x of r.body.results) expect([200, 201], JSON.stringify(x)).toContain(x.status)
      batch = []
    }
    for (let i = 0; i < runs.length; i++) {
      if (batch.length && (batch[0]!.station !== runs[i]!.station || cuts.includes(i))) await send()
      batch.push(runs[i]!)
    }
    await send()
  } else {
    for (const s of [0, 1] as const) {
      const lines = runs.filter((p) => p.station === s).map((p) => JSON.stringify(bodyOf(trial, p))).join('\n')
      if (!lines) continue
      const r = await fetch(`${baseUrl()}/api/imports?${new URLSearchParams({ station: STATIONS[s], format: 'jsonl', fileName: `${trial}.jsonl` })}`, {
        method: 'POST', headers: { cookie: engineer, 'content-type': 'application/octet-stream', accept: 'application/json' }, body: lines,
      })
      expect(r.status).toBe(202)
      const { jobId } = await r.json() as { jobId: string }
      for (let job: any; ;) {
        job = (await call('GET', `/api/imports/${jobId}`, { cookie: engineer })).body
        if (job.status !== 'running') { expect(job).toMatchObject({ status: 'done', runsRejected: 0 }); break }
        await new Promise((res) => setTimeout(res, 50))
      }
    }
  }
}

/** What Tercet shows of the trial's lot, with the trial's own names taken out. */
async function record(trial: string) {
  const strip = (x: unknown) => JSON.parse(JSON.stringify(x).replaceAll(trial, 'T'))
  const histories = []
  for (let u = 0; u < UNITS; u++) {
    const r = await call('GET', `/api/units/AO-${trial}-${u}`, { cookie: engineer })
    expect(r.status).toBe(200)
    histories.push(r.body.runs.map((x: any) => ({ id: x.id, step: x.step, attempt: x.attempt, verdict: x.verdict, station: x.station }))
      .sort((a: any, b: any) => (a.step < b.step ? -1 : a.step > b.step ? 1 : a.attempt - b.attempt)))
  }
  // a summary read while a fold of the lot held it up says what it leaves out (backlog); the figures compared are complete ones
  let summary = (await call('GET', `/api/lots/AO-${trial}/summary`, { cookie: engineer })).body
  for (let tries = 0; summary.backlog && tries < 40; tries++) {
    await new Promise((r) => setTimeout(r, 250))
    summary = (await call('GET', `/api/lots/AO-${trial}/summary`, { cookie: engineer })).body
  }
  expect(summary.backlog).toBeNull()
  const detail = (await call('GET', `/api/lots/AO-${trial}`, { cookie: engineer })).body.lot
  const units = (await call('GET', `/api/lots/AO-${trial}/units?sort=serial`, { cookie: engineer })).body.units
  return strip({
    histories,
    steps: summary.steps.map((s: any) => ({ step: s.step, runs: s.runs, units: s.units, firstPass: s.firstPass, finalPass: s.finalPass })),
    capability: summary.capability.map((c: any) => ({ step: c.step, name: c.name, qualifier: c.qualifier, n: c.n, mean: c.mean, sd: c.sigmaOverall, min: c.min, max: c.max, cpk: c.cpk, ppk: c.ppk })),
    readiness: detail.readiness,
    units: units.map((x: any) => ({ serial: x.serial, verdict: x.verdict, firstPass: x.firstPass, maxAttempts: x.maxAttempts, runs: x.runs })),
  })
}

/** The same, counted from the planned runs themselves by test time (start, finish, station run id). */
function recount() {
  const time = (p: Planned) => [base + p.unit * 3_600_000 + p.minute * 60_000, p.seconds, p.index] as const
  const byTime = (a: Planned, b: Planned) => { const x = time(a); const y = time(b); return x[0] - y[0] || x[1] - y[1] || x[2] - y[2] }
  const histories = []
  const steps = new Map<string, { runs: number; units: number; firstPass: number; finalPass: number }>()
  const firstPower = new Map<string, number[]>()
  const unitRows = []
  let notReady = 0
  for (let u = 0; u < UNITS; u++) {
    const h: any[] = []
    let ready = true
    let anyFail = false
    let firstFail = false
    let maxAttempts = 0
    for (const step of [...STEPS].sort()) {
      const list = PLANNED.filter((p) => p.unit === u && p.step === step).sort(byTime)
      list.forEach((p, i) => h.push({ id: uuidOf('T', p.index), step, attempt: i + 1, verdict: p.power > 9 ? 'fail' : 'pass', station: STATIONS[p.station] }))
      const s = steps.get(step) ?? { runs: 0, units: 0, firstPass: 0, finalPass: 0 }
      s.runs += list.length
      s.units++
      if (list[0]!.power <= 9) s.firstPass++; else firstFail = true
      if (list.at(-1)!.power <= 9) s.finalPass++; else { ready = false; anyFail = true }
      steps.set(step, s)
      maxAttempts = Math.max(maxAttempts, list.length)
      const key = `${step}`
      firstPower.set(key, [...(firstPower.get(key) ?? []), list[0]!.power])
    }
    histories.push(h)
    if (!ready) notReady++
    unitRows.push({ serial: `AO-T-${u}`, verdict: anyFail ? 'fail' : 'pass', firstPass: !firstFail, maxAttempts, runs: PLANNED.filter((p) => p.unit === u).length })
  }
  return { histories, steps: STEPS.map((s) => ({ step: s, ...steps.get(s)! })), firstPower, readiness: { units: UNITS, notReady }, units: unitRows }
}

describe('the record does not depend on the order in which runs arrive', () => {
  it('gives identical histories, yields, capability and readiness for every arrival order and way in', async () => {
    const want = recount()
    let reference: any
    let trials = 0
    await fc.assert(fc.asyncProperty(
      fc.shuffledSubarray(PLANNED.map((p) => p.index), { minLength: PLANNED.length, maxLength: PLANNED.length }),
      fc.constantFrom<Mode>('one by one', 'many at once', 'batches', 'import'),
      fc.uniqueArray(fc.integer({ min: 1, max: PLANNED.length - 1 }), { maxLength: 4 }),
      async (order, mode, cuts) => {
        const t = randomBytes(4).toString('hex')
        trials++
        await postAll(t, order, mode, cuts)
        const got = await record(t)
        expect(got.histories).toEqual(want.histories)
        expect(got.steps).toEqual(want.steps)
        expect(got.readiness).toEqual(want.readiness)
        expect(got.units).toEqual(want.units)
        for (const c of got.capability.filter((x: any) => x.name === 'output_power')) {
          const values = want.firstPower.get(c.step)!
          expect(c.n).toBe(values.length)
          expect(c.mean).toBeCloseTo(mean(values), 10)
          expect(c.min).toBe(min(values))
          expect(c.max).toBe(max(values))
          if (values.length > 1) expect(c.sd).toBeCloseTo(sampleStandardDeviation(values), 10)
        }
        // every trial shows the very figures of the first, to the last bit where sums may be taken in another order
        reference ??= got
        expect(got.capability.map((c: any) => ({ ...c, mean: round(c.mean), sd: round(c.sd), cpk: round(c.cpk), ppk: round(c.ppk) })))
          .toEqual(reference.capability.map((c: any) => ({ ...c, mean: round(c.mean), sd: round(c.sd), cpk: round(c.cpk), ppk: round(c.ppk) })))
      },
    ), { numRuns: 12 })
    expect(trials).toBe(12)
  }, 240_000)
})

const round = (x: number | null) => (x === null ? null : Math.round(x * 1e9) / 1e9)
