// npm run soak [-- --minutes 10] [--ci] [--no-build] [--calibrate-seconds 25] [--load 0.8] [--max-growth-mb 200]
//
// A long steady load on the built server, to see whether memory or latency creep. On a fresh bench database
// (tercet_soak, prepared as bench:ingest prepares its own) and a server on a free loopback port:
//   1. calibration (--calibrate-seconds, default 25): the 32 stations post single runs back to back (closed loop);
//      the runs acknowledged per second after the first 5 s are the capacity;
//   2. the soak (--minutes, default 10): the same 32 stations at --load (default 0.8) of that capacity, open loop:
//      each station's runs fall due on a Poisson schedule of its own, whatever the server answers, and wait in the
//      station's queue. A station has one request in flight at a time, as a station's uploader does: it posts its
//      oldest waiting run alone, or, when several wait (after one of its offline spells of 10–20 s, or when the
//      server fell behind), up to 50 of them as one batch. An open loop keeps the offered rate independent of the
//      server's speed, so a server that slows shows as a growing backlog and a growing due-to-acknowledged time
//      (`ackP99Ms`; a run tested offline is due when its station is back) instead of hiding behind a rate that falls
//      with it. 503s are retried with the same run id after Retry-After (at least), with exponential backoff;
//      network failures likewise. Three readers poll the floor snapshot and the soak lots' summaries meanwhile.
// Runs are realistic (fixtures/run-generator: every step of a unit in order, the station's own verdict, a retest
// after a failing final); each station has its own token, part, lot and serials.
//
// stdout: one JSON line per minute { minute, rssMb, p50Ms, p99Ms, runs, errors5xx, status503, … } where rssMb is the
// server process's VmRSS at the minute's end, p50/p99 are of station posts' round trips of single runs in that
// minute, runs are runs acknowledged in it, errors5xx are 5xx answers other than 503 (stations and readers); then
// one summary line (see `summary` below and FLAT_RULE in lib/soak-core.ts). Progress goes to stderr, the server's
// own output to .data/soak-server.log (its last lines are shown when the soak fails).
// Exits 1 on lost or duplicated runs, stored runs no station sent or without measurements, valid runs refused,
// any 5xx other than 503, the server exiting, or the server's RSS rising more than --max-growth-mb after the first
// minute; never on a speed figure. --ci marks the summary and calibrates for 20 s (the CI call:
// `npm run soak -- --minutes 2.5 --ci`).
import { closeSync, openSync, readFileSync } from 'node:fs'
import http from 'node:http'
import { loadavg } from 'node:os'
import { performance } from 'node:perf_hooks'
import type { ChildProcess } from 'node:child_process'
import { resolve } from 'node:path'
import { dataDir, dbSettings, loadEnv, serverEnv } from './lib/env.mjs'
import { HOST, builtEntry, databasePid, freePort, prepareBenchDatabase, rssMb, startBuiltServer, stopChild, waitHealthy } from './lib/bench-server'
import { retryDelay, stationVerdict, type Backoff, type SpecLimit } from './lib/station-sim-core'
import {
  FLAT_RULE, SOAK_USAGE, SoakUsageError, failures, flatness, parseSoakArgs, percentile, reconcile,
  type Ledger, type MinuteSample,
} from './lib/soak-core'
import { createKnex } from '../server/database/connection'
import { generateStationToken } from '../server/utils/station-token'
import { DEMO_PRODUCTS, type DemoProduct } from '../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../fixtures/run-generator'
import signIns from '../fixtures/demo-sign-ins.json'

const DATABASE = 'tercet_soak'
const SERVER_LOG = resolve(dataDir, 'soak-server.log')
const STATIONS = 32
const BATCH_MAX = 50
const CALIBRATION_WARMUP_S = 5
const DRAIN_MS = 60_000
const REQUEST_TIMEOUT_MS = 60_000
// a station keeps a run until it is acknowledged: no attempt limit, at most 8 s between tries
const BACKOFF: Backoff = { baseMs: 250, capMs: 8000, attempts: Number.MAX_SAFE_INTEGER }
const OFFLINE_EVERY_S = 150
const READERS = [{ what: 'floor', everyMs: 2000 }, { what: 'lot', everyMs: 3000 }, { what: 'lot', everyMs: 3000 }] as const

const say = (m: string) => process.stderr.write(`[soak ${new Date().toISOString().slice(11, 19)}] ${m}\n`)
const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, Math.max(0, ms)))
let died: () => void = () => {}
/** Resolves when the server exits during the soak. */
const death = new Promise<void>((r) => { died = r })
/** A sleep that ends early when the server exits, so the soak stops at once. */
const pause = (ms: number) => Promise.race([sleep(ms), death])
const round = (x: number, d = 1) => (Number.isFinite(x) ? Math.round(x * 10 ** d) / 10 ** d : null)

// ---- HTTP ----------------------------------------------------------------------------------------

const networkCauses = new Map<string, number>()
const agent = new http.Agent({ keepAlive: true, maxSockets: 64 })
type Reply = { status: number | 'network'; body: string; retryAfter?: number; ms: number; cookies?: string[] }

function request(port: number, method: string, path: string, headers: Record<string, string>, body?: string): Promise<Reply> {
  const t0 = performance.now()
  return new Promise((done) => {
    const failed = (e: NodeJS.ErrnoException) => {
      // why, for the summary: a connection the server closed while idle, a timeout…
      const why = e.code ?? e.message
      networkCauses.set(why, (networkCauses.get(why) ?? 0) + 1)
      done({ status: 'network', body: '', ms: performance.now() - t0 })
    }
    const req = http.request({
      host: HOST, port, method, path, agent, timeout: REQUEST_TIMEOUT_MS,
      headers: { accept: 'application/json', ...headers, ...(body !== undefined ? { 'content-type': 'application/json', 'content-length': String(Buffer.byteLength(body)) } : {}) },
    }, (res) => {
      const chunks: Buffer[] = []
      res.on('data', (c: Buffer) => chunks.push(c))
      res.on('error', failed)
      res.on('end', () => {
        const ra = Number(res.headers['retry-after'])
        done({ status: res.statusCode!, body: Buffer.concat(chunks).toString('utf8'), retryAfter: Number.isFinite(ra) && ra > 0 ? ra : undefined, ms: performance.now() - t0, cookies: res.headers['set-cookie'] })
      })
    })
    req.on('timeout', () => req.destroy(new Error('timed out')))
    req.on('error', failed)
    req.end(body)
  })
}

// ---- tallies ---------------------------------------------------------------------------------------

class Tally {
  single: number[] = []
  batch: number[] = []
  ackDelay: number[] = []
  reader: number[] = []
  runs = 0
  batches = 0
  errors5xx = 0
  status503 = 0
  network = 0
  refused = 0
  readerOther = 0
}
let minute = new Tally()
let total = new Tally()
const both = (f: (t: Tally) => void) => { f(minute); f(total) }
const ledger: Ledger = { sent: new Set(), acknowledged: new Set() }
const refusals: string[] = []

/** Counts a failed answer; true when the request should be tried again. */
function countFailure(status: number | 'network'): boolean {
  if (status === 'network') { both((t) => t.network++); return true }
  if (status === 503) { both((t) => t.status503++); return true }
  if (status >= 500) { both((t) => t.errors5xx++); return true }
  return false
}

// ---- stations --------------------------------------------------------------------------------------

type Item = { run: GeneratedRun; json: string; dueAt: number; retest: boolean; tries: number }

class Station {
  queue: Item[] = []
  private retests: string[] = []
  private unit = 0
  private stepIndex = 0
  private clock = 0
  private wake?: () => void
  offlineUntil = 0
  nextOffline = 0

  constructor(readonly index: number, readonly token: string, readonly model: DemoProduct, readonly lot: string,
    readonly limits: SpecLimit[], private readonly rand: () => number) {}

  private get finalStep() { return this.model.steps[this.model.steps.length - 1]! }

  /** The station's next run: a pending retest first, else the next step of its current unit. */
  make(dueAt: number): Item {
    let serial: string
    let step: string
    let retest = false
    const pending = this.retests.shift()
    if (pending) { serial = pending; step = this.finalStep; retest = true } else {
      serial = `SK${String(this.index + 1).padStart(2, '0')}-${String(this.unit + 1).padStart(6, '0')}`
      step = this.model.steps[this.stepIndex]!
      if (++this.stepIndex === this.model.steps.length) { this.stepIndex = 0; this.unit++ }
    }
    // tested a few minutes ago, in the order the station made them (distinct to the millisecond)
    this.clock = Math.max(this.clock + 1, Date.now() - 3 * 60_000)
    const run = generateRun({ product: this.model, lot: this.lot, serial, step, startedAt: new Date(this.clock), rand: this.rand, failRate: retest ? 0 : undefined, withTrace: step === this.finalStep })
    run.stationVerdict = stationVerdict(this.limits, run)
    return { run, json: JSON.stringify(run), dueAt, retest, tries: 0 }
  }

  push(item: Item) { this.queue.push(item); this.wake?.() }

  /** Until a run is queued or `ms` pass. */
  waitForWork(ms: number): Promise<void> {
    return new Promise((r) => {
      const timer = setTimeout(() => this.wake?.(), Math.max(0, ms))
      this.wake = () => { clearTimeout(timer); this.wake = undefined; r() }
    })
  }

  poke() { this.wake?.() }

  acknowledged(item: Item, status: number, view: () => any) {
    ledger.acknowledged.add(item.run.id)
    const delay = Date.now() - item.dueAt
    both((t) => { t.runs++; t.ackDelay.push(delay) })
    // a failing first final brings its retest (the same unit again) into the station's work
    if (status === 201 && item.run.step === this.finalStep && !item.retest && view()?.verdict === 'fail') this.retests.push(item.run.serial)
  }
}

function refused(item: Item, status: number, detail: string) {
  both((t) => t.refused++)
  if (refusals.length < 5) refusals.push(`${status} for ${item.run.serial} ${item.run.step}: ${detail.slice(0, 300)}`)
}

type Mode = { closed: boolean; arrivalsOver: () => boolean; stopAt: () => number }

/** One request: the oldest waiting run alone, or up to 50 waiting runs as a batch. Returns the wait before the next. */
async function postOnce(port: number, s: Station): Promise<number> {
  const auth = { authorization: `Bearer ${s.token}` }
  if (s.queue.length === 1) {
    const item = s.queue[0]!
    ledger.sent.add(item.run.id)
    const r = await request(port, 'POST', '/api/v1/runs', auth, item.json)
    both((t) => t.single.push(r.ms))
    if (r.status === 201 || r.status === 200) {
      s.queue.shift()
      s.acknowledged(item, r.status, () => JSON.parse(r.body))
      return 0
    }
    if (countFailure(r.status)) return retryDelay(++item.tries, BACKOFF, r.retryAfter)!
    s.queue.shift()
    refused(item, r.status as number, r.body)
    return 0
  }
  const items = s.queue.slice(0, BATCH_MAX)
  for (const i of items) ledger.sent.add(i.run.id)
  const r = await request(port, 'POST', '/api/v1/runs/batch', auth, `{"runs":[${items.map((i) => i.json).join(',')}]}`)
  both((t) => { t.batch.push(r.ms); t.batches++ })
  if (r.status !== 200) {
    const tries = Math.max(...items.map((i) => ++i.tries))
    if (countFailure(r.status)) return retryDelay(tries, BACKOFF, r.retryAfter)!
    s.queue.splice(0, items.length)
    for (const i of items) refused(i, r.status as number, r.body)
    return 0
  }
  const results: { status: number; run?: any; detail?: string }[] = JSON.parse(r.body).results
  const again: Item[] = []
  let wait = 0
  results.forEach((res, k) => {
    const item = items[k]!
    if (res.status === 201 || res.status === 200) s.acknowledged(item, res.status, () => res.run)
    else if (countFailure(res.status)) { again.push(item); wait = Math.max(wait, retryDelay(++item.tries, BACKOFF, r.retryAfter)!) } else refused(item, res.status, res.detail ?? '')
  })
  // runs the server could not take now go back to the front, under the same ids
  s.queue.splice(0, items.length, ...again)
  return wait
}

/** The station's uploader: one request at a time while there is work, until its mode says stop. */
async function uploader(port: number, s: Station, mode: Mode): Promise<void> {
  for (;;) {
    if (Date.now() >= mode.stopAt()) return
    if (!s.queue.length) {
      if (mode.closed && !mode.arrivalsOver()) { s.queue.push(s.make(Date.now())); continue }
      if (mode.arrivalsOver()) return
      await s.waitForWork(mode.stopAt() - Date.now())
      continue
    }
    if (!mode.closed && Date.now() < s.offlineUntil) { await pause(Math.min(s.offlineUntil, mode.stopAt()) - Date.now()); continue }
    const wait = await postOnce(port, s)
    if (wait > 0) await pause(Math.min(wait, mode.stopAt() - Date.now()))
  }
}

let made = 0

/** Open-loop arrivals: exponential gaps at `perSecond`, and now and then an offline spell of 10–20 s. */
async function arrivals(s: Station, perSecond: number, until: number, rand: () => number): Promise<void> {
  let due = Date.now()
  s.nextOffline = Date.now() + (10 + rand() * OFFLINE_EVERY_S) * 1000
  for (;;) {
    due += (-Math.log(1 - rand()) / perSecond) * 1000
    if (due >= until || serverDied) break
    await pause(due - Date.now())
    if (serverDied) break
    if (Date.now() >= s.nextOffline) {
      s.offlineUntil = Date.now() + (10 + rand() * 10) * 1000
      s.nextOffline = s.offlineUntil + (0.5 + rand()) * OFFLINE_EVERY_S * 1000
    }
    made++
    // a run tested while its station is offline is due when the station is back
    s.push(s.make(Math.max(due, s.offlineUntil)))
  }
  // the arrivals are over at `until`, not at the last one before it; an uploader waiting for work learns it then
  await pause(until - Date.now())
  s.poke()
}

// ---- readers ---------------------------------------------------------------------------------------

async function signIn(port: number): Promise<string> {
  for (let retry = 1; ; retry++) {
    const r = await request(port, 'POST', '/api/auth/login', {}, JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }))
    if (r.status === 200) return (r.cookies ?? []).map((c) => c.split(';')[0]).join('; ')
    const wait = countFailure(r.status) && retry < 10 ? retryDelay(retry, BACKOFF, r.retryAfter) : undefined
    if (wait === undefined) throw new Error(`signing in as the engineer answered ${r.status}: ${r.body.slice(0, 200)}`)
    await sleep(wait)
  }
}

async function reader(port: number, what: 'floor' | 'lot', everyMs: number, lots: string[], until: () => number, offset: number): Promise<void> {
  const cookie = await signIn(port)
  let n = offset
  while (Date.now() < until()) {
    const path = what === 'floor' ? '/api/floor/snapshot' : `/api/lots/${encodeURIComponent(lots[n++ % lots.length]!)}/summary`
    const r = await request(port, 'GET', path, { cookie })
    both((t) => t.reader.push(r.ms))
    if (r.status !== 200 && !countFailure(r.status)) both((t) => t.readerOther++)
    await pause(Math.min(everyMs - r.ms, until() - Date.now()))
  }
}

// ---- main ------------------------------------------------------------------------------------------

function pct(xs: number[], p: number) { return round(percentile([...xs].sort((a, b) => a - b), p)) }

/** The end of the server's log, on stderr. */
function showServerLog() {
  if (!serverLogged) return
  try {
    const lines = readFileSync(SERVER_LOG, 'utf8').trimEnd().split('\n')
    say(`the server's log ends (all of it in ${SERVER_LOG}):\n${lines.slice(-40).join('\n')}`)
  } catch { /* no log yet */ }
}

let server: ChildProcess | undefined
let serverLogged = false
let serverDied = false
for (const sig of ['SIGINT', 'SIGTERM'] as const) process.on(sig, () => { void stopChild(server).finally(() => process.exit(130)) })
process.on('exit', () => { server?.kill('SIGKILL') })

async function main() {
  const args = parseSoakArgs(process.argv.slice(2))
  say(`preparing the build and a fresh database ${DATABASE}…`)
  prepareBenchDatabase(DATABASE, args.noBuild)
  const entry = builtEntry()
  const env = loadEnv()
  const settings = dbSettings(env, DATABASE)
  const knex = createKnex({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DATABASE }, { min: 0, max: 4 })
  try {
    // 32 stations of their own, each with a token, spread over the three demo parts and two lots per part
    const stationIds: number[] = []
    const stations: Station[] = []
    const port = await freePort()
    const tokens: string[] = []
    for (let i = 0; i < STATIONS; i++) {
      const [id] = await knex('stations').insert({ name: `SOAK-${String(i + 1).padStart(2, '0')}`, location: 'soak rack' })
      const t = generateStationToken()
      await knex('station_tokens').insert({ station_id: id, token_hash: t.hash, hint: t.hint })
      stationIds.push(id!)
      tokens.push(t.token)
    }
    // the server's own log (a line per request) would drown the soak's lines: it goes to a file, shown on failure
    const logFd = openSync(SERVER_LOG, 'w')
    serverLogged = true
    server = startBuiltServer(entry, { ...serverEnv(env, settings), NUXT_DB_HOST: HOST, PORT: String(port), HOST, NODE_ENV: 'production', NUXT_SESSION_PASSWORD: env.NUXT_SESSION_PASSWORD }, [], logFd)
    closeSync(logFd)
    server.once('exit', (code, signal) => { if (server) { serverDied = true; died(); say(`the server exited (code ${code}, signal ${signal})`) } })
    await waitHealthy(`http://${HOST}:${port}`, server)
    const pid = server.pid!
    const rssStartMb = rssMb(pid)
    const limitsByPart = new Map<string, SpecLimit[]>()
    for (const p of DEMO_PRODUCTS) {
      const r = await request(port, 'GET', `/api/products/${encodeURIComponent(p.partNumber)}/spec`, { authorization: `Bearer ${tokens[0]}` })
      limitsByPart.set(p.partNumber, r.status === 200 ? JSON.parse(r.body).limits : [])
    }
    const lots = new Set<string>()
    for (let i = 0; i < STATIONS; i++) {
      const model = DEMO_PRODUCTS[i % DEMO_PRODUCTS.length]!
      const lot = `SOAK-${model.partNumber.split('-')[1]}-${1 + (Math.floor(i / DEMO_PRODUCTS.length) % 2)}`
      lots.add(lot)
      stations.push(new Station(i, tokens[i]!, model, lot, limitsByPart.get(model.partNumber)!, mulberry32(1000 + i)))
    }
    const load1Start = loadavg()[0]!
    if (load1Start > 1.5) say(`WARNING: load average ${load1Start.toFixed(1)} before the run: other work on this machine lowers the capacity and stretches every figure`)

    // 1. calibration: closed loop, single runs, acknowledged per second after the warm-up
    say(`calibrating: ${STATIONS} stations posting single runs back to back for ${args.calibrateSeconds} s…`)
    const calStart = Date.now()
    const calEnd = calStart + args.calibrateSeconds * 1000
    let countedFrom = 0
    const calibrating: Mode = { closed: true, arrivalsOver: () => Date.now() >= calEnd, stopAt: () => calEnd + DRAIN_MS }
    const warm = sleep(CALIBRATION_WARMUP_S * 1000).then(() => { countedFrom = total.runs })
    await Promise.all([warm, ...stations.map((s) => uploader(port, s, calibrating))])
    const calRuns = total.runs - countedFrom
    const capacity = calRuns / (args.calibrateSeconds - CALIBRATION_WARMUP_S)
    const target = args.load * capacity
    say(`capacity ${capacity.toFixed(1)} runs/s (single runs, ${STATIONS} stations back to back); soaking at ${target.toFixed(1)} runs/s (${Math.round(args.load * 100)} %) for ${args.minutes} min`)
    if (!(capacity > 0)) throw new Error('calibration stored no runs')
    const cal = total
    const calibration = { seconds: args.calibrateSeconds, runs: cal.runs, capacityRunsPerSec: round(capacity), p50Ms: pct(cal.single, 0.5), p99Ms: pct(cal.single, 0.99), errors5xx: cal.errors5xx, status503: cal.status503, refused: cal.refused }
    total = new Tally()

    // 2. the soak
    minute = new Tally()
    const start = Date.now()
    const end = start + args.minutes * 60_000
    const hardStop = end + DRAIN_MS
    let ackedByEnd = 0
    const atEnd = setTimeout(() => { ackedByEnd = total.runs }, end - Date.now())
    const soaking: Mode = { closed: false, arrivalsOver: () => Date.now() >= end, stopAt: () => (serverDied ? 0 : hardStop) }
    const samples: (MinuteSample & Record<string, unknown>)[] = []
    let minuteStart = start
    const sample = (at: number) => {
      const m = minute
      minute = new Tally()
      const s = {
        minute: round((at - start) / 60_000, 2)!, rssMb: round(rssMb(pid))!, p50Ms: pct(m.single, 0.5)!, p99Ms: pct(m.single, 0.99)!,
        runs: m.runs, errors5xx: m.errors5xx, status503: m.status503,
        runsPerSec: round(m.runs / ((at - minuteStart) / 1000)), batches: m.batches, batchP99Ms: pct(m.batch, 0.99), ackP99Ms: pct(m.ackDelay, 0.99),
        backlog: stations.reduce((n, st) => n + st.queue.length, 0), network: m.network, refused: m.refused,
        readerP99Ms: pct(m.reader, 0.99), dbRssMb: round(rssMb(databasePid())), load1: round(loadavg()[0]!, 2),
      }
      minuteStart = at
      samples.push(s)
      process.stdout.write(JSON.stringify(s) + '\n')
    }
    const ticker = (async () => {
      for (let k = 1; start + k * 60_000 <= end; k++) {
        await pause(start + k * 60_000 - Date.now())
        if (serverDied) return
        sample(Date.now())
      }
    })()
    const readersDone = Promise.all(READERS.map((r, k) => reader(port, r.what, r.everyMs, [...lots], () => (serverDied ? 0 : end), k)))
    const rand = mulberry32(77)
    await Promise.all([
      ...stations.map((s) => arrivals(s, target / STATIONS, end, rand)),
      ...stations.map((s) => uploader(port, s, soaking)),
      ticker, readersDone,
    ])
    // the last part-minute, when it is worth a line (a quarter of a minute or more)
    if (!serverDied && end - minuteStart >= 15_000 && samples.length < Math.ceil(args.minutes)) sample(end)
    const drainedAt = Date.now()
    clearTimeout(atEnd)
    if (serverDied) ackedByEnd = total.runs

    // 3. what is in the database
    say('checking every run id in the database…')
    const rows = (await knex('test_runs').whereIn('station_id', stationIds).groupBy('uuid').select('uuid', knex.raw('COUNT(*) AS copies')))
      .map((r: any) => ({ uuid: String(r.uuid), copies: Number(r.copies) }))
    const [[same]] = await knex.raw(`SELECT COALESCE(SUM(n - 1), 0) AS extra FROM (SELECT COUNT(*) AS n FROM test_runs WHERE station_id IN (${stationIds.map(() => '?').join(',')})
      GROUP BY unit_id, step, started_at HAVING COUNT(*) > 1) d`, stationIds)
    const [[bare]] = await knex.raw(`SELECT COUNT(*) AS n FROM test_runs r WHERE r.station_id IN (${stationIds.map(() => '?').join(',')})
      AND NOT EXISTS (SELECT 1 FROM measurements m WHERE m.run_id = r.id)`, stationIds)
    const rec = reconcile(ledger, rows, Number(same.extra))
    const rssEndMb = rssMb(pid)
    const flat = flatness(samples)
    const firstRss = samples[0]?.rssMb ?? rssStartMb
    const rssRiseMb = samples.length ? Math.max(...samples.map((s) => s.rssMb)) - firstRss : 0
    const failed = failures({
      lost: rec.lost, duplicated: rec.duplicated, unknownInDatabase: rec.unknownInDatabase, runsWithoutMeasurements: Number(bare.n),
      errors5xx: cal.errors5xx + total.errors5xx, refused: cal.refused + total.refused, serverDied, rssRiseMb, maxGrowthMb: args.maxGrowthMb,
    })
    const summary = {
      summary: true, ci: args.ci, minutes: args.minutes, stations: STATIONS, calibration, load: args.load, targetRunsPerSec: round(target),
      // runs that fell due, and runs acknowledged, per second of the soak (the backlog left at its end drains after it)
      offeredRunsPerSec: round(made / ((end - start) / 1000)), achievedRunsPerSec: round(ackedByEnd / ((Math.min(end, drainedAt) - start) / 1000)),
      sent: ledger.sent.size, acknowledged: ledger.acknowledged.size, unacknowledged: ledger.sent.size - ledger.acknowledged.size,
      inDatabase: rec.inDatabase, lost: rec.lost, duplicated: rec.duplicated, unknownInDatabase: rec.unknownInDatabase, runsWithoutMeasurements: Number(bare.n),
      singleRequests: total.single.length, batches: total.batches, p50Ms: pct(total.single, 0.5), p99Ms: pct(total.single, 0.99), batchP99Ms: pct(total.batch, 0.99), ackP99Ms: pct(total.ackDelay, 0.99),
      errors5xx: total.errors5xx, status503: total.status503, network: total.network, networkCauses: Object.fromEntries(networkCauses), refused: total.refused, refusals,
      readers: { requests: total.reader.length, p50Ms: pct(total.reader, 0.5), p99Ms: pct(total.reader, 0.99), notOk: total.readerOther },
      rssStartMb: round(rssStartMb), rssFirstMinuteMb: round(firstRss), rssEndMb: round(rssEndMb), rssRiseMb: round(rssRiseMb), maxGrowthMb: args.maxGrowthMb,
      ...flat, flatRule: FLAT_RULE, drainSeconds: round((drainedAt - end) / 1000), serverDied,
      load1Start: round(load1Start, 2), load1End: round(loadavg()[0]!, 2), lostIds: rec.lostIds, ok: failed.length === 0, failures: failed,
    }
    process.stdout.write(JSON.stringify(summary) + '\n')
    if (failed.length) showServerLog()
    for (const f of failed) say(`FAILED: ${f}`)
    process.exitCode = failed.length ? 1 : 0
  } finally {
    const child = server
    server = undefined
    await stopChild(child)
    agent.destroy()
    await knex.destroy()
  }
}

// leftover sleeps (a station's next due run, a retry) would keep the process up until they end
main().then(() => process.exit(process.exitCode ?? 0), async (e) => {
  if (e instanceof SoakUsageError) process.stderr.write(`soak: ${e.message}\n${SOAK_USAGE}\n`)
  else { process.stderr.write(`[soak] ${e?.stack ?? e}\n`); showServerLog() }
  const child = server
  server = undefined
  await stopChild(child)
  process.exit(e instanceof SoakUsageError ? 2 : 1)
})
