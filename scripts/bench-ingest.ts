// npm run bench:ingest [-- --no-build] [-- --cluster] — throughput and latency of station ingest on a fresh bench database and the
// built server, loopback only, at the commit durability the database runs with (printed as flushLogAtTrxCommit).
// Two yardsticks, each written by 32 connections in the same run:
//   minimal — one run row and its 20 measurement rows in one transaction, nothing else, through mysql2 in one round
//             trip: the least any store of a run can cost (minimalRawRunsPerSec, minimalRatio);
//   raw     — the server's own write path (write plan and statements) called directly, one run per call, without
//             HTTP, validation or gathering (rawRunsPerSec, ratio).
// Each yardstick runs half its time just before and half just after the HTTP stage; every stage's rate counts the
// time until its runs are folded into the lot statistics. Prints one JSON line per endpoint; progress goes to stderr.
// TERCET_BENCH_SECONDS sets the length of each HTTP stage (default 20); TERCET_BENCH_PROFILE=<dir>
// starts the server with --cpu-prof into that folder; TERCET_WRITE_LANES and TERCET_WRITE_GROUP override the server's
// number of write groups in flight and their largest size. The server's own output (one log line per request, as in
// production) goes to .data/bench-ingest-server.log.
// --cluster then runs the same single-run and batch stages through HAProxy against two instances over a three-node
// Galera cluster of the bench's own (scripts/lib/bench-cluster.ts) and prints both topologies' figures and their ratio.
import type { ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { openSync } from 'node:fs'
import { loadavg } from 'node:os'
import { resolve } from 'node:path'
import mysql from 'mysql2/promise'
import { dataDir, dbSettings, loadEnv, serverEnv } from './lib/env.mjs'
import { batchTally, cannon } from './lib/bench-cannon'
import { clusterStages } from './lib/bench-cluster'
import { HOST, builtEntry, cpuTimes, databasePid, freePort, prepareBenchDatabase, startBuiltServer, stopChild, waitHealthy } from './lib/bench-server'
import { createKnex } from '../server/database/connection'
import { generateStationToken } from '../server/utils/station-token'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type RevisionInForce } from '../server/database/repositories/spec-lookup'
import { judgeRun, type JudgedMeasurement } from '../server/services/ingest/judge-run'
import { writeRuns, type RunToWrite } from '../server/services/ingest/write-runs'
import { calibrationAt, type RunCalibration } from '../server/services/calibration/in-force'
import { foldPendingStats } from '../server/services/ingest/fold-param-stats'
import type { Knex } from 'knex'
import { validateRun, type StationRun } from '../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../fixtures/demo-catalogue'
import { gaussian, generateRun, mulberry32 } from '../fixtures/run-generator'

const DATABASE = 'tercet_bench_ingest'
const CONNECTIONS = 32
const SECONDS = Number(process.env.TERCET_BENCH_SECONDS || 20)
const RAW_SECONDS = Math.max(6, 2 * Math.round(SECONDS / 4))
const WARMUP_SECONDS = 3
const BATCH = 100
const MEASUREMENTS = 20
const PART = 'VFW-T3-375'
const LOT = 'T3-BENCH-01'
// generous ceilings on the rate, so the pre-generated bodies never run out within the duration
const SINGLE_BODIES = 2500 * (SECONDS + WARMUP_SECONDS)
const BATCH_RUNS = 2000 * SECONDS
const YARDSTICK_BODIES = 2000

const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)

let server: ChildProcess | undefined
function stopServer(): Promise<void> {
  const child = server
  server = undefined
  return stopChild(child)
}
for (const sig of ['SIGINT', 'SIGTERM'] as const) process.on(sig, () => { void stopServer().finally(() => process.exit(130)) })
process.on('exit', () => { server?.kill('SIGKILL') })

// ---- bodies ------------------------------------------------------------------------------------

type Prepared = { json: Buffer; run: StationRun; judged: JudgedMeasurement[]; verdict: 'pass' | 'fail' }

const EXTRA_OFFSETS = [300, 3000, 30_000, 300_000]

/** A final-step run of the tripler with 20 posted measurements, as a busy station would send it. */
function benchRun(i: number, rand: () => number, startedAt: Date, product: ProductInfo, revision: RevisionInForce, tag: string): Prepared {
  const model = DEMO_PRODUCTS.find((p) => p.partNumber === PART)!
  const body = generateRun({ product: model, lot: LOT, serial: `B${tag}-${i}`, step: 'final', startedAt, rand, withTrace: false })
  const n = () => gaussian(rand)
  const pn = new Map<number, number>(body.measurements.filter((m) => m.name === 'phase_noise').map((m) => [m.offsetHz, m.value]))
  for (const f of EXTRA_OFFSETS) {
    const lo = pn.get(f / 3)!
    const hi = pn.get((f * 10) / 3)!
    body.measurements.push({ name: 'phase_noise', offsetHz: f, value: Math.round(((lo + hi) / 2 + 0.3 * n()) * 100) / 100, unit: 'dBc/Hz', uncertainty: 1 })
  }
  body.measurements.push(
    { name: 'case_temperature', value: Math.round((41 + 1.5 * n()) * 10) / 10, unit: 'degC' },
    { name: 'input_drive', value: Math.round((3 + 0.1 * n()) * 100) / 100, unit: 'dBm', uncertainty: 0.2 },
    { name: 'spur_max', value: Math.round((-82 + 2 * n()) * 10) / 10, unit: 'dBc' },
    { name: 'supply_voltage', value: Math.round((5 + 0.01 * n()) * 1000) / 1000, unit: 'V' },
    { name: 'return_loss', value: Math.round((18 + n()) * 10) / 10, unit: 'dB' },
  )
  if (body.measurements.length !== MEASUREMENTS) throw new Error(`bench body has ${body.measurements.length} measurements`)
  const v = validateRun(body)
  if (!v.ok) throw new Error(`bench body is invalid: ${JSON.stringify(v.errors)}`)
  const j = judgeRun(v.value, product, revision)
  body.stationVerdict = j.verdict
  v.value.stationVerdict = j.verdict
  return { json: Buffer.from(JSON.stringify(body)), run: v.value, judged: j.measurements, verdict: j.verdict }
}

/** `count` bodies tested 20 ms apart from `hoursAgo` on: each stage's come after the stage before's on every station. */
function makeBodies(count: number, seed: number, product: ProductInfo, revision: RevisionInForce, tag: string, hoursAgo: number): Prepared[] {
  const rand = mulberry32(seed)
  const start = Date.now() - hoursAgo * 3_600_000
  const out: Prepared[] = new Array(count)
  for (let i = 0; i < count; i++) out[i] = benchRun(i, rand, new Date(start + i * 20), product, revision, tag)
  return out
}

// ---- yardsticks ----------------------------------------------------------------------------------

// each writer has stations of its own, so that every station's runs come in test order (a run older than its
// station's latest would make the statistics repair their moving ranges) and the writers never share a row
type RawCtx = {
  pool: mysql.Pool; knex: Knex; lotId: number; productId: number; rawStations: number[]; minimalStations: number[]
  revision: RevisionInForce; product: ProductInfo; calibration: RunCalibration
}

let rawSerial = 0

/** A bench body as the server's write path takes it, for a unit no other writer touches. */
function toWrite(p: Prepared, ctx: RawCtx, stationId: number): RunToWrite {
  const run: StationRun = { ...p.run, id: randomUUID(), serial: `RAW-${process.pid}-${++rawSerial}` }
  // tested now: later than anything this station posted before
  const startedAt = new Date(Date.now() - 60_000)
  return {
    station: { id: stationId, name: 'bench' }, run, hash: 'f'.repeat(64),
    ctx: {
      startedAt, finishedAt: new Date(startedAt.getTime() + 50_000), product: ctx.product, revision: ctx.revision,
      judged: { measurements: p.judged, verdict: p.verdict, missingRequired: [], measurementIssue: false }, lotId: ctx.lotId, calibrationLapsed: false,
      calibration: ctx.calibration,
    },
  }
}

const MEASUREMENT_COLUMNS = `run_id, lot_id, station_id, revision_id, step, first_attempt, started_at, name, qualifier, value, unit, uncertainty,
  lsl, usl, target, rule, guard_band, verdict, zone, derived, excess_db, implausible`

/** One run row and its measurement rows, nothing else, in one transaction sent as one round trip. */
function minimalStatements(p: Prepared, ctx: RawCtx, unitId: number, attempt: number, stationId: number): { sql: string; values: unknown[] } {
  const r = p.run
  const startedAt = new Date(r.startedAt)
  const values: unknown[] = [randomUUID(), 'f'.repeat(64), unitId, ctx.lotId, stationId, ctx.revision.id, r.step, attempt, startedAt, new Date(r.finishedAt), p.verdict]
  const rows: string[] = []
  for (const m of p.judged) {
    rows.push('(@run, ?, ?, ?, ?, 1, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)')
    const l = m.limit
    values.push(ctx.lotId, stationId, ctx.revision.id, r.step, startedAt, m.name, m.qualifier, m.value, m.unit, m.uncertainty,
      l ? l.lsl : null, l ? l.usl : null, l ? l.target : null, l ? l.rule : null, l ? l.guardBand : null, m.verdict, m.zone, m.derived, m.excessDb, false)
  }
  return {
    sql: `START TRANSACTION;
      INSERT INTO test_runs (uuid, body_hash, unit_id, lot_id, station_id, revision_id, step, attempt, started_at, finished_at, server_verdict) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?);
      SET @run = LAST_INSERT_ID();
      INSERT INTO measurements (${MEASUREMENT_COLUMNS}) VALUES ${rows.join(', ')};
      COMMIT`,
    values,
  }
}

type Stage = { runs: number; seconds: number; p50Ms: number; p99Ms: number }

/**
 * 32 workers for `seconds`, each calling `one(worker)` for one run after another, while the queued runs are folded
 * into the parameter statistics every 250 ms as the server's folder does.
 */
async function yardstick(ctx: RawCtx, seconds: number, one: (worker: number) => Promise<number>): Promise<Stage> {
  let runs = 0
  const took: number[] = []
  const started = Date.now()
  const until = started + seconds * 1000
  let writing = true
  const folder = (async () => {
    while (writing) {
      await foldPendingStats(ctx.knex, { background: true })
      await new Promise((r) => setTimeout(r, 250))
    }
  })()
  await Promise.all(Array.from({ length: CONNECTIONS }, async (_, w) => {
    while (Date.now() < until) {
      const t0 = performance.now()
      // awaited first: `runs += await …` would read `runs` before the wait and lose other workers' counts
      const n = await one(w)
      runs += n
      took.push(performance.now() - t0)
    }
  }))
  // as on the HTTP side, the caller times the folding of what is still queued when the stage ends
  const elapsed = (Date.now() - started) / 1000
  writing = false
  await folder
  took.sort((a, b) => a - b)
  const at = (q: number) => Math.round(took[Math.min(took.length - 1, Math.floor(q * took.length))] ?? Number.NaN)
  return { runs, seconds: elapsed, p50Ms: at(0.5), p99Ms: at(0.99) }
}

/** The minimal writer: each of 32 connections keeps one unit of its own and adds attempts to it. */
async function minimalStage(ctx: RawCtx, bodies: Prepared[], seconds: number): Promise<Stage> {
  const conns = await Promise.all(Array.from({ length: CONNECTIONS }, () => ctx.pool.getConnection()))
  try {
    const units: { id: number; attempt: number }[] = []
    for (let w = 0; w < CONNECTIONS; w++) {
      const [res] = await conns[w]!.query<any>('INSERT INTO units (product_id, lot_id, serial) VALUES (?, ?, ?)', [ctx.productId, ctx.lotId, `MIN-${process.pid}-${++rawSerial}`])
      units.push({ id: Number(res.insertId), attempt: 0 })
    }
    let next = 0
    return await yardstick(ctx, seconds, async (w) => {
      const u = units[w]!
      const st = minimalStatements(bodies[next++ % bodies.length]!, ctx, u.id, ++u.attempt, ctx.minimalStations[w % ctx.minimalStations.length]!)
      await conns[w]!.query(st.sql, st.values)
      return 1
    })
  } finally {
    for (const c of conns) c.release()
  }
}

/** The server's write path without HTTP: one run per call, 32 calls in flight. */
async function rawStage(ctx: RawCtx, bodies: Prepared[], seconds: number, perCall = 1): Promise<Stage> {
  let next = 0
  return yardstick(ctx, seconds, async (w) => {
    const items = Array.from({ length: perCall }, () => toWrite(bodies[next++ % bodies.length]!, ctx, ctx.rawStations[w % ctx.rawStations.length]!))
    const results = await writeRuns(ctx.knex, items)
    for (const r of results) if ('error' in r) throw r.error
    return perCall
  })
}

/**
 * Folds what a stage left queued and says how long that took: a stage's rate counts the time until its runs are
 * in the lot statistics, so that a writer cannot look faster by leaving the statistics behind.
 */
async function drained(knex: Knex): Promise<{ runs: number; seconds: number }> {
  const t0 = performance.now()
  const runs = await foldPendingStats(knex)
  return { runs, seconds: (performance.now() - t0) / 1000 }
}

/** The bench's lot and its 32 stations with a token each; returns the tokens. */
async function benchStations(knex: Knex): Promise<string[]> {
  const product = (await findProductByPart(knex, PART))!
  await knex('lots').insert({ product_id: product.id, code: LOT, planned_qty: 100_000 })
  const tokens: string[] = []
  for (let s = 1; s <= CONNECTIONS; s++) {
    const [id] = await knex('stations').insert({ name: `BENCH-${String(s).padStart(2, '0')}`, location: 'bench rack' })
    const t = generateStationToken()
    await knex('station_tokens').insert({ station_id: id, token_hash: t.hash, hint: t.hint })
    tokens.push(t.token)
  }
  return tokens
}

// ---- main --------------------------------------------------------------------------------------

async function questions(pool: mysql.Pool): Promise<number> {
  const [rows] = await pool.query<any[]>("SHOW GLOBAL STATUS LIKE 'Questions'")
  return Number(rows[0].Value)
}

const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d

/** User + system CPU seconds a process has used so far. */
function cpuSeconds(pid: number): number {
  const t = cpuTimes(pid)
  return t.user + t.system
}

async function main() {
  say('preparing the build and a fresh bench database…')
  // --no-build benchmarks the build already in the output folder, as it is
  prepareBenchDatabase(DATABASE, process.argv.includes('--no-build'))
  const entry = builtEntry()

  const env = loadEnv()
  const settings = dbSettings(env, DATABASE)
  const knex = createKnex({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DATABASE }, { min: 0, max: CONNECTIONS + 4 })
  const pool = mysql.createPool({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DATABASE, connectionLimit: CONNECTIONS, timezone: 'Z', multipleStatements: true })
  try {
    const product = (await findProductByPart(knex, PART))!
    const revision = revisionAt(await listEffectiveRevisions(knex, product.id), new Date())!
    const tokens = await benchStations(knex)
    const lotId = (await knex('lots').where({ code: LOT }).first('id')).id as number
    // the bench stations hold no instruments: every run is judged at the current history version with no links
    const yardstickStations = async (prefix: string) => {
      const ids: number[] = []
      for (let s = 1; s <= CONNECTIONS; s++) ids.push((await knex('stations').insert({ name: `${prefix}-${String(s).padStart(2, '0')}`, location: 'bench rack' }))[0]!)
      return ids
    }
    const rawStations = await yardstickStations('BENCH-RAW')
    const ctx: RawCtx = {
      pool, knex, lotId: lotId!, productId: product.id, rawStations, minimalStations: await yardstickStations('BENCH-MIN'), revision, product,
      calibration: await calibrationAt(knex, rawStations[0]!, new Date()),
    }
    const [[durability]] = await pool.query<any[]>('SELECT @@innodb_flush_log_at_trx_commit AS flush, @@sync_binlog AS sync, @@log_bin AS bin')
    const flushLogAtTrxCommit = Number(durability.flush)
    say(`database commits with innodb_flush_log_at_trx_commit=${flushLogAtTrxCommit}, sync_binlog=${durability.sync}, binary log ${Number(durability.bin) ? 'on' : 'off'}`)

    say(`generating ${SINGLE_BODIES} single-run bodies and ${BATCH_RUNS} batch runs (${MEASUREMENTS} measurements each)…`)
    // the HTTP stages need only the bodies' bytes; the yardsticks reuse a few thousand judged runs (with fresh ids and
    // serials). Keeping every judged run would give this process, which also runs the load generator, a heap of
    // hundreds of megabytes whose collection would slow the load generator down.
    let generated = makeBodies(SINGLE_BODIES, 1, product, revision, 'S', 6)
    const singleBuffers = generated.map((p) => p.json)
    const single = generated.slice(0, YARDSTICK_BODIES)
    generated = makeBodies(BATCH_RUNS, 2, product, revision, 'M', 3)
    const batchBodies: Buffer[] = []
    for (let i = 0; i + BATCH <= generated.length; i += BATCH) {
      batchBodies.push(Buffer.concat([Buffer.from('{"runs":['), ...generated.slice(i, i + BATCH).flatMap((p, k) => (k ? [Buffer.from(','), p.json] : [p.json])), Buffer.from(']}')]))
    }
    const batchRuns = generated.slice(0, YARDSTICK_BODIES)
    generated = []

    const port = await freePort()
    const base = `http://${HOST}:${port}`
    const profileDir = process.env.TERCET_BENCH_PROFILE
    server = startBuiltServer(entry, { ...serverEnv(env, settings), NUXT_DB_HOST: HOST, PORT: String(port), HOST, NODE_ENV: 'production', NUXT_SESSION_PASSWORD: env.NUXT_SESSION_PASSWORD, ...(process.env.TERCET_WRITE_LANES ? { TERCET_WRITE_LANES: process.env.TERCET_WRITE_LANES } : {}), ...(process.env.TERCET_WRITE_GROUP ? { TERCET_WRITE_GROUP: process.env.TERCET_WRITE_GROUP } : {}) },
      profileDir ? ['--cpu-prof', `--cpu-prof-dir=${profileDir}`] : [], openSync(resolve(dataDir, 'bench-ingest-server.log'), 'w'))
    await waitHealthy(base, server)
    const load = loadavg()[0]!
    if (load > 1.5) say(`WARNING: load average ${load.toFixed(1)} before the run: other work on this machine will lower every figure`)

    say(`warming up for ${WARMUP_SECONDS} s…`)
    const warm = await cannon(port, '/api/v1/runs', singleBuffers, tokens, { seconds: WARMUP_SECONDS })
    const rest = singleBuffers.slice(warm.used)

    /** Runs a yardstick stage from an empty queue and reports its rate, statements and CPU per run. */
    const timed = async (label: string, stage: () => Promise<Stage>) => {
      // each stage starts from an empty queue: what was left queued is folded first, untimed
      await foldPendingStats(knex)
      const q0 = await questions(pool)
      const d0 = cpuSeconds(databasePid())
      const u0 = process.cpuUsage()
      const r = await stage()
      const drain = await drained(knex)
      const u = process.cpuUsage(u0)
      const q1 = await questions(pool)
      const perSec = r.runs / (r.seconds + drain.seconds)
      say(`  ${label}: ${round(perSec)} runs/s (${drain.runs} runs left to fold, in ${round(drain.seconds, 2)} s), ${round((q1 - q0) / Math.max(1, r.runs))} statements per run, p50 ${r.p50Ms} ms, p99 ${r.p99Ms} ms; CPU per run: writer ${round((u.user + u.system) / 1000 / r.runs, 2)} ms, MariaDB ${round((1000 * (cpuSeconds(databasePid()) - d0)) / r.runs, 2)} ms`)
      return perSec
    }
    // each yardstick runs for half its time just before the HTTP stage and half just after, so that a machine whose
    // speed drifts during the bench (other tenants, clock boost) weighs on every figure alike
    const half = RAW_SECONDS / 2
    const yardsticks = async (when: string) => {
      say(`yardsticks (${when}), ${CONNECTIONS} connections, ${half} s each…`)
      const minimal = await timed(`minimal (run row + ${MEASUREMENTS} measurement rows per transaction)`, () => minimalStage(ctx, single, half))
      const raw = await timed('raw (the write path called directly, one run per call)', () => rawStage(ctx, single, half))
      return { minimal, raw }
    }
    const before = await yardsticks('before')

    say(`POST /api/v1/runs: ${CONNECTIONS} connections for ${SECONDS} s…`)
    const q0 = await questions(pool)
    const c0 = cpuSeconds(server.pid!)
    const k0 = cpuTimes(server.pid!).system
    const d0 = cpuSeconds(databasePid())
    const s = await cannon(port, '/api/v1/runs', rest, tokens, { seconds: SECONDS })
    const drain = await drained(knex)
    const c1 = cpuSeconds(server.pid!)
    const k1 = cpuTimes(server.pid!).system
    const d1 = cpuSeconds(databasePid())
    const q1 = await questions(pool)
    const runsPerSec = s['2xx'] / (s.duration + drain.seconds)
    say(`  ${s['2xx']} runs stored (${drain.runs} left to fold, in ${round(drain.seconds, 2)} s), ${round((q1 - q0) / Math.max(1, s['2xx']))} statements per run (all clients of the database); CPU per run: server ${round((1000 * (c1 - c0)) / s['2xx'], 2)} ms (of it in the kernel ${round((1000 * (k1 - k0)) / s['2xx'], 2)} ms), MariaDB ${round((1000 * (d1 - d0)) / s['2xx'], 2)} ms`)
    const after = await yardsticks('after')
    // both halves last the same time, so their mean rate is the rate over the whole stage
    const minimal = (before.minimal + after.minimal) / 2
    const raw = (before.raw + after.raw) / 2
    process.stdout.write(JSON.stringify({
      endpoint: 'runs', runsPerSec: round(runsPerSec), p50Ms: s.latency.p50, p99Ms: s.latency.p99, errors: s.errors + s.timeouts,
      non2xx: s.non2xx, rawRunsPerSec: round(raw), ratio: round(runsPerSec / raw, 3),
      minimalRawRunsPerSec: round(minimal), minimalRatio: round(runsPerSec / minimal, 3), flushLogAtTrxCommit,
    }) + '\n')

    say(`POST /api/v1/runs/batch: ${BATCH} runs per request, ${CONNECTIONS} connections…`)
    const tally = batchTally()
    // a batch answers only when all its runs are in, so the length is a number of requests worth
    // about the same time as the single-run stage (at least one per connection) rather than a duration
    const rounds = Math.max(1, Math.min(Math.floor(batchBodies.length / CONNECTIONS), Math.round((runsPerSec * SECONDS) / (BATCH * CONNECTIONS))))
    const b = await cannon(port, '/api/v1/runs/batch', batchBodies, tokens, { amount: rounds * CONNECTIONS }, tally.onBody)
    const { stored, refused } = tally
    const bDrain = await drained(knex)
    const batchPerSec = stored / (b.duration + bDrain.seconds)
    say(`  ${stored} runs stored in ${b['2xx']} requests (${bDrain.runs} left to fold, in ${round(bDrain.seconds, 2)} s), ${refused} runs refused inside batches`)
    const rawBatch = await timed(`raw batches (the write path called directly, ${BATCH} runs per call)`, () => rawStage(ctx, batchRuns, RAW_SECONDS, BATCH))
    process.stdout.write(JSON.stringify({
      // non2xx counts refused requests and refused runs inside 200 batch answers alike; the minimal writer is the
      // same one-run-per-transaction yardstick as on the single endpoint
      endpoint: 'runs/batch', runsPerSec: round(batchPerSec), p50Ms: b.latency.p50, p99Ms: b.latency.p99, errors: b.errors + b.timeouts,
      non2xx: b.non2xx + refused, rawRunsPerSec: round(rawBatch), ratio: round(batchPerSec / rawBatch, 3),
      minimalRawRunsPerSec: round(minimal), minimalRatio: round(batchPerSec / minimal, 3), flushLogAtTrxCommit,
    }) + '\n')
    if (process.argv.includes('--cluster')) {
      // the single node's server and pools go first: the cluster's nodes and instances share the same two cores
      await stopServer()
      await clusterStages({
        database: DATABASE, seconds: SECONDS, connections: CONNECTIONS, batch: BATCH, rounds,
        singleBodies: singleBuffers, batchBodies, stations: benchStations,
      }, { runsPerSec, batchPerSec })
    }
  } finally {
    await stopServer()
    await pool.end()
    await knex.destroy()
  }
}

main().catch(async (e) => {
  process.stderr.write(`[bench] ${e?.stack ?? e}\n`)
  await stopServer()
  process.exit(1)
})
