// npm run bench:dashboard — lot-summary latency from the aggregates against the naive SQL aggregate,
// at 1M and then 10M measurements in one lot. Loopback only; stops by itself.
import { spawn } from 'node:child_process'
import net from 'node:net'
import { resolve } from 'node:path'
import { performance } from 'node:perf_hooks'
import type { Knex } from 'knex'
import { loadEnv, root, serverEnv, dbSettings } from './lib/env.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { buildIfChanged } from './lib/build.mjs'
import { createKnex } from '../server/database/connection'
import { rebuildLotAggregates } from '../server/services/analytics/rebuild-aggregates'
import signIns from '../fixtures/demo-sign-ins.json'

const DB = 'tercet_bench_dash'
const LOT = 'BENCH-DASH-A'
const PER_RUN = 20
const CHUNK_RUNS = 25_000
const SIZES = (process.env.BENCH_SIZES ?? '1000000,10000000').split(',').map(Number)

// 20 parameters of the final step: the demo tripler's limits plus a few station-defined ones
const PARAMS: [string, number, string, number, number][] = [
  ['output_power', 0, 'dBm', 7, 0.4], ['frequency_error', 0, 'ppm', 0, 0.35], ['supply_current', 0, 'mA', 78, 2.3],
  ['harmonic_rejection', 1, 'dB', 38, 1.5], ['harmonic_rejection', 2, 'dB', 33, 1.5], ['harmonic_rejection', 4, 'dB', 45, 1.5],
  ['phase_noise', 100, 'dBc/Hz', -116.9, 0.5], ['phase_noise', 1000, 'dBc/Hz', -136.9, 0.5], ['phase_noise', 10000, 'dBc/Hz', -146.9, 0.5],
  ['phase_noise', 100000, 'dBc/Hz', -151.9, 0.5], ['phase_noise', 1000000, 'dBc/Hz', -153.9, 0.5], ['integrated_jitter', 0, 's', 14.3e-15, 0.5e-15],
  ['output_frequency', 0, 'Hz', 375e6, 130], ['case_temperature', 0, 'degC', 41, 1.2], ['input_power', 0, 'dBm', 3, 0.2],
  ['supply_voltage', 0, 'V', 5, 0.01], ['warmup_time', 0, 's', 42, 4], ['spur_level', 0, 'dBc', -78, 2], ['tune_code', 0, 'count', 512, 9], ['pll_lock_time', 0, 'ms', 3.1, 0.3],
]

async function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const s = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => { const p = (s.address() as net.AddressInfo).port; s.close(() => done(p)) })
  })
}

const paramTable = PARAMS.map(([n, q, u, mu, sd]) => `SELECT '${n}' AS name, ${q} AS qualifier, '${u}' AS unit, ${mu} AS mu, ${sd} AS sd`).join(' UNION ALL ')

/** Bulk rows generated inside MariaDB from its sequence tables: units, one final run each, 20 measurements per run. */
async function growTo(db: Knex, lot: { id: number; productId: number }, stations: number[], haveRuns: number, wantRuns: number) {
  const base = Date.parse('2026-10-01T00:00:00Z') / 1000
  for (let from = haveRuns + 1; from <= wantRuns; from += CHUNK_RUNS) {
    const to = Math.min(wantRuns, from + CHUNK_RUNS - 1)
    await db.transaction(async (trx) => {
      await trx.raw(`INSERT INTO units (product_id, lot_id, serial) SELECT ?, ?, CONCAT('BD', LPAD(seq, 9, '0')) FROM seq_${from}_to_${to}`, [lot.productId, lot.id])
      await trx.raw(
        `INSERT INTO test_runs (uuid, body_hash, unit_id, lot_id, station_id, revision_id, step, attempt, started_at, finished_at, server_verdict)
         SELECT UUID(), REPEAT('0', 64), u.id, ?, ELT(1 + (s.seq % ?), ${stations.join(', ')}), NULL, 'final', 1,
                FROM_UNIXTIME(? + s.seq * 7), FROM_UNIXTIME(? + s.seq * 7 + 5), IF(s.seq % 29 = 0, 'fail', 'pass')
         FROM seq_${from}_to_${to} s JOIN units u ON u.product_id = ? AND u.serial = CONCAT('BD', LPAD(s.seq, 9, '0'))`,
        [lot.id, stations.length, base, base, lot.productId])
      await trx.raw(
        `INSERT INTO unit_steps (unit_id, step, attempts, first_verdict, latest_verdict, latest_run_id)
         SELECT unit_id, 'final', 1, server_verdict, server_verdict, id FROM test_runs WHERE lot_id = ? AND id >= (SELECT MIN(r.id) FROM test_runs r JOIN units u ON u.id = r.unit_id WHERE u.serial = CONCAT('BD', LPAD(?, 9, '0')))`,
        [lot.id, from])
      await trx.raw(
        `INSERT INTO measurements (run_id, lot_id, station_id, step, first_attempt, started_at, name, qualifier, value, unit, verdict)
         SELECT r.id, r.lot_id, r.station_id, 'final', 1, r.started_at, p.name, p.qualifier,
                p.mu + p.sd * (RAND() + RAND() + RAND() + RAND() - 2) * 1.732, p.unit, 'info'
         FROM test_runs r JOIN (${paramTable}) p WHERE r.lot_id = ? AND r.id >= (SELECT MIN(r2.id) FROM test_runs r2 JOIN units u ON u.id = r2.unit_id WHERE u.serial = CONCAT('BD', LPAD(?, 9, '0')))`,
        [lot.id, from])
    })
  }
}

function percentile(sorted: number[], p: number) {
  const i = (sorted.length - 1) * p
  const lo = Math.floor(i)
  return sorted[lo]! + (sorted[Math.min(lo + 1, sorted.length - 1)]! - sorted[lo]!) * (i - lo)
}

async function main() {
  const env = loadEnv()
  // BENCH_REUSE=1 measures again on the rows an earlier run loaded (the 10M load takes a while)
  const reuse = process.env.BENCH_REUSE === '1'
  await prepareDatabase(env, DB, { recreate: !reuse, seed: true, tokenFile: resolve(root, '.data/bench-dash-tokens.json') })
  buildIfChanged()
  const settings = dbSettings(env, DB)
  const db = createKnex({ host: '127.0.0.1', port: settings.port, user: settings.user, password: settings.password, database: DB })
  const product = await db('products').where({ part_number: 'VFW-T3-375' }).first('id')
  const existing = reuse ? await db('lots').where({ code: LOT }).first('id') : undefined
  const lotId = existing ? existing.id : (await db('lots').insert({ product_id: product.id, code: LOT, planned_qty: 1_000_000 }))[0]
  const stations = (await db('stations').select('id')).map((s: any) => s.id as number)
  const lot = { id: Number(lotId), productId: product.id as number }

  const port = await freePort()
  const server = spawn(process.execPath, [resolve(root, process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')], {
    env: { ...serverEnv(env, settings), PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production' }, stdio: 'ignore',
  })
  try {
    const url = `http://127.0.0.1:${port}`
    for (let i = 0; i < 150; i++) { try { if ((await fetch(`${url}/api/health`)).ok) break } catch { /* starting */ } await new Promise((r) => setTimeout(r, 200)) }
    const login = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }) })
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')

    let runs = Number((await db('test_runs').where({ lot_id: lot.id }).count({ n: '*' }))[0]!.n)
    for (const size of SIZES) {
      const want = Math.ceil(size / PER_RUN)
      const t0 = performance.now()
      if (want > runs) {
        await growTo(db, lot, stations, runs, want)
        runs = want
        await rebuildLotAggregates(db, lot.id)
      }
      const loadSeconds = (performance.now() - t0) / 1000
      const [[count]] = await db.raw('SELECT COUNT(*) AS n FROM measurements WHERE lot_id = ?', [lot.id])

      for (let i = 0; i < 3; i++) await fetch(`${url}/api/lots/${LOT}/summary`, { headers: { cookie } })
      const times: number[] = []
      for (let i = 0; i < 50; i++) {
        const s = performance.now()
        const r = await fetch(`${url}/api/lots/${LOT}/summary`, { headers: { cookie } })
        if (!r.ok) throw new Error(`summary answered ${r.status}: ${await r.text()}`)
        await r.arrayBuffer()
        times.push(performance.now() - s)
      }
      times.sort((a, b) => a - b)
      const naive: number[] = []
      for (let i = 0; i < 3; i++) {
        const s = performance.now()
        await db.raw('SELECT step, name, qualifier, COUNT(*), AVG(value), STDDEV_SAMP(value) FROM measurements WHERE lot_id = ? GROUP BY step, name, qualifier', [lot.id])
        naive.push(performance.now() - s)
      }
      naive.sort((a, b) => a - b)
      console.log(JSON.stringify({
        measurements: Number(count.n), summaryP50Ms: +percentile(times, 0.5).toFixed(2), summaryP95Ms: +percentile(times, 0.95).toFixed(2),
        naiveMs: +naive[1]!.toFixed(1), loadSeconds: +loadSeconds.toFixed(1),
      }))
    }
  } finally {
    server.kill('SIGTERM')
    await db.destroy()
  }
}

main().catch((e) => { console.error(e); process.exit(1) })
