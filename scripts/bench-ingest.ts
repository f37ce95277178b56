// npm run bench:ingest [-- --no-build] — throughput and latency of station ingest against the same rows written
// straight through mysql2, on a fresh bench database and the built server, loopback only.
// Prints one JSON line per endpoint on stdout; progress goes to stderr.
// The single-run raw writer runs half its time just before and half just after the HTTP stage; every stage's rate
// counts the time until its runs are folded into the lot statistics.
// TERCET_BENCH_SECONDS sets the length of each HTTP stage (default 20); TERCET_BENCH_PROFILE=<dir>
// starts the server with --cpu-prof into that folder; TERCET_INGEST_WRITERS overrides the server's number of write slots.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { existsSync, readFileSync } from 'node:fs'
import { loadavg } from 'node:os'
import net from 'node:net'
import { resolve } from 'node:path'
import autocannon from 'autocannon'
import mysql from 'mysql2/promise'
import { dbSettings, loadEnv, root, serverEnv } from './lib/env.mjs'
import { createKnex } from '../server/database/connection'
import { generateStationToken } from '../server/utils/station-token'
import { findProductByPart, listEffectiveRevisions, revisionAt, type ProductInfo, type RevisionInForce } from '../server/database/repositories/spec-lookup'
import { judgeRun, type JudgedMeasurement } from '../server/services/ingest/judge-run'
import type { RunRow } from '../server/database/repositories/runs'
import { lockedUnit, runWriteStatements, unitLockStatements } from '../server/services/ingest/run-statements'
import { joinStatements } from '../server/database/raw-connection'
import { foldPendingStats } from '../server/services/ingest/fold-param-stats'
import type { Knex } from 'knex'
import { validateRun, type StationRun } from '../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../fixtures/demo-catalogue'
import { gaussian, generateRun, mulberry32 } from '../fixtures/run-generator'

const DATABASE = 'tercet_bench_ingest'
const HOST = '127.0.0.1'
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

const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)

let server: ChildProcess | undefined
function stopServer(): Promise<void> {
  const child = server
  server = undefined
  if (!child || child.exitCode !== null) return Promise.resolve()
  return new Promise((done) => {
    const hard = setTimeout(() => child.kill('SIGKILL'), 10_000)
    child.once('exit', () => { clearTimeout(hard); done() })
    child.kill('SIGTERM')
  })
}
for (const sig of ['SIGINT', 'SIGTERM'] as const) process.on(sig, () => { void stopServer().finally(() => process.exit(130)) })
process.on('exit', () => { server?.kill('SIGKILL') })

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const s = net.createServer().once('error', fail).listen(0, HOST, () => {
      const port = (s.address() as net.AddressInfo).port
      s.close(() => done(port))
    })
  })
}

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

function makeBodies(count: number, seed: number, product: ProductInfo, revision: RevisionInForce, tag: string): Prepared[] {
  const rand = mulberry32(seed)
  const start = Date.now() - 6 * 3_600_000
  const out: Prepared[] = new Array(count)
  for (let i = 0; i < count; i++) out[i] = benchRun(i, rand, new Date(start + i * 20), product, revision, tag)
  return out
}

// ---- HTTP side ---------------------------------------------------------------------------------

type CannonResult = {
  duration: number; errors: number; timeouts: number; non2xx: number; '2xx': number
  latency: { p50: number; p99: number }
}

/** autocannon with one station token per connection and a fresh body for every request. */
function cannon(port: number, path: string, bodies: Buffer[], tokens: string[], span: { seconds: number } | { amount: number }, onBody?: (status: number, body: string) => void): Promise<CannonResult & { used: number }> {
  let next = 0
  let nextToken = 0
  let instance: any
  const request = {
    method: 'POST', path,
    // autocannon deep-copies the options per connection, so this object is each connection's own
    conn: {} as { token?: string },
    setupRequest(req: any) {
      req.conn.token ??= tokens[nextToken++ % tokens.length]
      if (next >= bodies.length) { instance?.stop(); next = 0; say('WARNING: bodies ran out; stopping early') }
      const body = bodies[next++]!
      return { ...req, body, headers: { 'content-type': 'application/json', authorization: `Bearer ${req.conn.token}` } }
    },
    ...(onBody ? { onResponse: (status: number, body: string) => onBody(status, body) } : {}),
  }
  return new Promise((done, fail) => {
    const length = 'amount' in span ? { amount: span.amount } : { duration: span.seconds }
    instance = autocannon({ url: `http://${HOST}:${port}`, connections: CONNECTIONS, ...length, timeout: 120, requests: [request] }, (err: Error | null, r: CannonResult) => {
      if (err) fail(err)
      else done({ ...r, used: next })
    })
  })
}

async function waitHealthy(base: string): Promise<void> {
  const deadline = Date.now() + 60_000
  for (;;) {
    try { if ((await fetch(`${base}/api/health`)).ok) return } catch { /* not listening yet */ }
    if (!server || server.exitCode !== null) throw new Error('the bench server exited before becoming healthy')
    if (Date.now() > deadline) throw new Error('the bench server did not become healthy within 60 s')
    await new Promise((r) => setTimeout(r, 200))
  }
}

// ---- raw side ----------------------------------------------------------------------------------
// The same rows the server writes for a run — a new unit, the run, its measurements, the unit's step row and the
// lot aggregates — with the very statement texts and round trips the server sends, straight through mysql2:
// what is left between the two figures is the server's own cost (HTTP, parsing, validation, judgement, SQL building).

type RawCtx = { pool: mysql.Pool; knex: Knex; lotId: number; productId: number; stationIds: number[]; revisionId: number }

let rawSerial = 0

function runRowFor(p: Prepared, ctx: RawCtx, unitId: number, stationId: number): RunRow {
  const r = p.run
  return {
    uuid: randomUUID(), bodyHash: 'f'.repeat(64), unitId, lotId: ctx.lotId, stationId, revisionId: ctx.revisionId, step: r.step, attempt: 1,
    startedAt: new Date(r.startedAt), finishedAt: new Date(r.finishedAt), operator: r.operator ?? null, softwareSequence: r.software?.sequence ?? null,
    softwareVersion: r.software?.version ?? null, temperatureC: r.conditions?.temperatureC ?? null, supplyV: r.conditions?.supplyV ?? null,
    stationVerdict: r.stationVerdict ?? null, serverVerdict: p.verdict, verdictDisagrees: false, missingRequired: [], calibrationLapsed: false,
    measurementIssue: false, reference: r.reference ?? null,
  }
}

/** One run as the server stores it: the unit-lock round trip, then the writes ending in COMMIT. */
async function rawRun(conn: mysql.PoolConnection, ctx: RawCtx, p: Prepared, stationId: number): Promise<void> {
  const lock = joinStatements(['START TRANSACTION', unitLockStatements(ctx.productId, ctx.lotId, `RAW-${process.pid}-${++rawSerial}`, p.run.step)])
  const [results] = await conn.query(lock.sql, lock.values)
  const unit = lockedUnit(results)
  const write = joinStatements([runWriteStatements({ row: runRowFor(p, ctx, unit.id, stationId), measurements: p.judged, traces: p.run.traces ?? [], previousLatest: null }), 'COMMIT'])
  await conn.query(write.sql, write.values)
}

/** Several runs in one transaction, each with the same two round trips inside it. */
async function rawRunsInOneTransaction(conn: mysql.PoolConnection, ctx: RawCtx, runs: Prepared[], stationId: number): Promise<void> {
  await conn.query('START TRANSACTION')
  for (const p of runs) {
    const lock = unitLockStatements(ctx.productId, ctx.lotId, `RAW-${process.pid}-${++rawSerial}`, p.run.step)
    const [results] = await conn.query(lock.sql, lock.values)
    const unit = lockedUnit(results)
    const write = runWriteStatements({ row: runRowFor(p, ctx, unit.id, stationId), measurements: p.judged, traces: p.run.traces ?? [], previousLatest: null })
    await conn.query(write.sql, write.values)
  }
  await conn.query('COMMIT')
}

/**
 * 32 workers, each writing `perTx` runs per transaction, for `seconds`, while the queued runs are folded into the
 * parameter statistics every 250 ms as the server's folder does: the same rows in the end.
 */
async function rawInsert(ctx: RawCtx, bodies: Prepared[], perTx: number, seconds: number): Promise<{ runs: number; seconds: number; p50Ms: number; p99Ms: number }> {
  let next = 0
  let runs = 0
  const took: number[] = []
  const started = Date.now()
  const until = started + seconds * 1000
  const worker = async (w: number) => {
    const conn = await ctx.pool.getConnection()
    await conn.query("SET SESSION tx_isolation = 'READ-COMMITTED'")
    try {
      while (Date.now() < until) {
        const stationId = ctx.stationIds[w % ctx.stationIds.length]!
        const t0 = performance.now()
        if (perTx === 1) await rawRun(conn, ctx, bodies[next++ % bodies.length]!, stationId)
        else await rawRunsInOneTransaction(conn, ctx, Array.from({ length: perTx }, () => bodies[next++ % bodies.length]!), stationId)
        took.push(performance.now() - t0)
        runs += perTx
      }
    } finally {
      conn.release()
    }
  }
  let writing = true
  const folder = (async () => {
    while (writing) {
      await foldPendingStats(ctx.knex, { background: true })
      await new Promise((r) => setTimeout(r, 250))
    }
  })()
  await Promise.all(Array.from({ length: CONNECTIONS }, (_, w) => worker(w)))
  // as on the HTTP side, the caller times the folding of what is still queued when the stage ends
  const elapsed = (Date.now() - started) / 1000
  writing = false
  await folder
  took.sort((a, b) => a - b)
  const at = (q: number) => Math.round(took[Math.min(took.length - 1, Math.floor(q * took.length))] ?? Number.NaN)
  return { runs, seconds: elapsed, p50Ms: at(0.5), p99Ms: at(0.99) }
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

// ---- main --------------------------------------------------------------------------------------

async function questions(pool: mysql.Pool): Promise<number> {
  const [rows] = await pool.query<any[]>("SHOW GLOBAL STATUS LIKE 'Questions'")
  return Number(rows[0].Value)
}

const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d

/** User + system CPU seconds a process has used so far (Linux /proc, 100 ticks per second). */
function cpuSeconds(pid: number): number {
  const t = cpuTimes(pid)
  return t.user + t.system
}

function cpuTimes(pid: number): { user: number; system: number } {
  try {
    const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ')
    return { user: Number(f[11]) / 100, system: Number(f[12]) / 100 }
  } catch { return { user: Number.NaN, system: Number.NaN } }
}

/** The project's MariaDB server process, for its CPU use. */
function databasePid(): number {
  try { return Number(readFileSync(resolve(root, '.data/mariadb/mysqld.pid'), 'utf8').trim()) } catch { return -1 }
}

async function main() {
  const outputDir = resolve(root, process.env.TERCET_OUTPUT_DIR || '.output')
  say('preparing the build and a fresh bench database…')
  // --no-build benchmarks the build already in the output folder, as it is
  const noBuild = process.argv.includes('--no-build')
  const prep = spawnSync(process.execPath, [resolve(root, 'scripts/lib/bench-prepare.mjs'), DATABASE, ...(noBuild ? ['--no-build'] : [])], { cwd: root, stdio: ['ignore', 2, 2], env: process.env })
  if (prep.status !== 0) throw new Error('preparing the build or the bench database failed (see above)')
  const entry = resolve(outputDir, 'server/index.mjs')
  if (!existsSync(entry)) throw new Error(`no build at ${entry}`)

  const env = loadEnv()
  const settings = dbSettings(env, DATABASE)
  const knex = createKnex({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DATABASE })
  const pool = mysql.createPool({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DATABASE, connectionLimit: CONNECTIONS, timezone: 'Z', multipleStatements: true })
  try {
    const product = (await findProductByPart(knex, PART))!
    const revision = revisionAt(await listEffectiveRevisions(knex, product.id), new Date())!
    const [lotId] = await knex('lots').insert({ product_id: product.id, code: LOT, planned_qty: 100_000 })
    const tokens: string[] = []
    const stationIds: number[] = []
    for (let s = 1; s <= CONNECTIONS; s++) {
      const [id] = await knex('stations').insert({ name: `BENCH-${String(s).padStart(2, '0')}`, location: 'bench rack' })
      const t = generateStationToken()
      await knex('station_tokens').insert({ station_id: id, token_hash: t.hash, hint: t.hint })
      tokens.push(t.token)
      stationIds.push(id!)
    }
    const ctx: RawCtx = { pool, knex, lotId: lotId!, productId: product.id, stationIds, revisionId: revision.id }

    say(`generating ${SINGLE_BODIES} single-run bodies and ${BATCH_RUNS} batch runs (${MEASUREMENTS} measurements each)…`)
    const single = makeBodies(SINGLE_BODIES, 1, product, revision, 'S')
    const batchRuns = makeBodies(BATCH_RUNS, 2, product, revision, 'M')
    const batchBodies: Buffer[] = []
    for (let i = 0; i + BATCH <= batchRuns.length; i += BATCH) {
      batchBodies.push(Buffer.concat([Buffer.from('{"runs":['), ...batchRuns.slice(i, i + BATCH).flatMap((p, k) => (k ? [Buffer.from(','), p.json] : [p.json])), Buffer.from(']}')]))
    }

    const port = await freePort()
    const base = `http://${HOST}:${port}`
    const profileDir = process.env.TERCET_BENCH_PROFILE
    server = spawn(process.execPath, [...(profileDir ? ['--cpu-prof', `--cpu-prof-dir=${profileDir}`] : []), entry], {
      env: { ...serverEnv(env, settings), NUXT_DB_HOST: HOST, PORT: String(port), HOST, NODE_ENV: 'production', NUXT_SESSION_PASSWORD: env.NUXT_SESSION_PASSWORD, ...(process.env.TERCET_INGEST_WRITERS ? { TERCET_INGEST_WRITERS: process.env.TERCET_INGEST_WRITERS } : {}) },
      stdio: ['ignore', 2, 2],
    })
    await waitHealthy(base)
    const load = loadavg()[0]!
    if (load > 1.5) say(`WARNING: load average ${load.toFixed(1)} before the run: other work on this machine will lower every figure`)

    const singleBuffers = single.map((p) => p.json)
    say(`warming up for ${WARMUP_SECONDS} s…`)
    const warm = await cannon(port, '/api/v1/runs', singleBuffers, tokens, { seconds: WARMUP_SECONDS })
    const rest = singleBuffers.slice(warm.used)

    // the raw writer runs for half its time just before the HTTP stage and half just after, so that a machine
    // whose speed drifts during the bench (other tenants, clock boost) weighs on both figures alike
    const rawHalf = async (when: string) => {
      say(`raw (${when}): ${CONNECTIONS} connections, one run's rows (unit, run, ${MEASUREMENTS}+ measurements, step row, aggregates) per transaction, for ${RAW_SECONDS / 2} s…`)
      // each raw stage starts from an empty queue: what was left queued is folded first, untimed
      await foldPendingStats(knex)
      const q0 = await questions(pool)
      const d0 = cpuSeconds(databasePid())
      const t0 = Date.now()
      const u0 = process.cpuUsage()
      const r = await rawInsert(ctx, single, 1, RAW_SECONDS / 2)
      const drain = await drained(knex)
      const u = process.cpuUsage(u0)
      const q1 = await questions(pool)
      const perSec = r.runs / (r.seconds + drain.seconds)
      say(`  ${round(perSec)} runs/s (${drain.runs} runs left to fold, in ${round(drain.seconds, 2)} s), ${round((q1 - q0) / Math.max(1, r.runs))} statements per run, transaction p50 ${r.p50Ms} ms, p99 ${r.p99Ms} ms; CPU per run: direct writer ${round((u.user + u.system) / 1000 / r.runs, 2)} ms, MariaDB ${round((1000 * (cpuSeconds(databasePid()) - d0)) / r.runs, 2)} ms`)
      return perSec
    }
    const rawBefore = await rawHalf('before')

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
    const rawAfter = await rawHalf('after')
    // both halves last the same time, so their mean rate is the rate over the whole raw stage
    const rawSingle = (rawBefore + rawAfter) / 2
    process.stdout.write(JSON.stringify({
      endpoint: 'runs', runsPerSec: round(runsPerSec), p50Ms: s.latency.p50, p99Ms: s.latency.p99, errors: s.errors + s.timeouts,
      non2xx: s.non2xx, rawRunsPerSec: round(rawSingle), ratio: round(runsPerSec / rawSingle, 3),
    }) + '\n')

    say(`POST /api/v1/runs/batch: ${BATCH} runs per request, ${CONNECTIONS} connections…`)
    let stored = 0
    let refused = 0
    // a batch answers only when all its runs are in, so the length is a number of requests worth
    // about the same time as the single-run stage (at least one per connection) rather than a duration
    const rounds = Math.max(1, Math.min(Math.floor(batchBodies.length / CONNECTIONS), Math.round((runsPerSec * SECONDS) / (BATCH * CONNECTIONS))))
    const b = await cannon(port, '/api/v1/runs/batch', batchBodies, tokens, { amount: rounds * CONNECTIONS }, (status, body) => {
      if (status !== 200) return
      for (const m of body.matchAll(/"status":(\d{3})/g)) (m[1] === '201' || m[1] === '200' ? stored++ : refused++)
    })
    const bDrain = await drained(knex)
    const batchPerSec = stored / (b.duration + bDrain.seconds)
    say(`  ${stored} runs stored in ${b['2xx']} requests (${bDrain.runs} left to fold, in ${round(bDrain.seconds, 2)} s), ${refused} runs refused inside batches`)
    say(`raw: ${CONNECTIONS} connections, ${BATCH} runs' rows per transaction, for ${RAW_SECONDS} s…`)
    const rb = await rawInsert(ctx, batchRuns, BATCH, RAW_SECONDS)
    const rbDrain = await drained(knex)
    const rawBatch = rb.runs / (rb.seconds + rbDrain.seconds)
    say(`  ${round(rawBatch)} runs/s (${rbDrain.runs} left to fold, in ${round(rbDrain.seconds, 2)} s)`)
    process.stdout.write(JSON.stringify({
      // non2xx counts refused requests and refused runs inside 200 batch answers alike
      endpoint: 'runs/batch', runsPerSec: round(batchPerSec), p50Ms: b.latency.p50, p99Ms: b.latency.p99, errors: b.errors + b.timeouts,
      non2xx: b.non2xx + refused, rawRunsPerSec: round(rawBatch), ratio: round(batchPerSec / rawBatch, 3),
    }) + '\n')
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
