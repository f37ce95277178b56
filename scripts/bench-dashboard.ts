// npm run bench:dashboard — the lot pages at 1M and then 10M measurements in one lot while stations keep posting.
// Loads the lot in bulk by SQL (scripts/lib/dash-load.ts: every step of the demo tripler, retests, two revisions,
// several stations), rebuilds its aggregates, then, with stations posting new units through the station API at a
// steady rate, times every lot route (capped per route) and the lot page in headless Chromium (the page also before
// the stations start). Prints JSON lines on stdout (see DEVELOPERS.md, "Benchmarks"); progress goes to stderr and the
// server's log to .data/bench-dash-server.log.
// BENCH_SIZES=1000000,10000000 (measurements), BENCH_REUSE=1 measures again on the rows an earlier run loaded,
// BENCH_INGEST_RATE=30 runs per second, BENCH_DASH_DB=tercet_bench_dash the database. Loopback only; stops by itself.
import type { ChildProcess } from 'node:child_process'
import { openSync } from 'node:fs'
import { loadavg } from 'node:os'
import { resolve } from 'node:path'
import { performance } from 'node:perf_hooks'
import type { Knex } from 'knex'
import { loadEnv, root, serverEnv, dbSettings } from './lib/env.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { buildIfChanged } from './lib/build.mjs'
import { HOST, builtEntry, freePort, startBuiltServer, stopChild, waitHealthy } from './lib/bench-server'
import { BENCH_STATIONS, PART, SERIAL_PREFIX, bulkUnits, growLot, measurementsPerUnit, openDashLot, type DashLot } from './lib/dash-load'
import { startStations } from './lib/dash-ingest'
import { firstChunk, fullRequest, timeRoute, type RouteFigure } from './lib/dash-measure'
import { timeLotPage } from './lib/dash-page'
import type { SpecLimit } from './lib/station-sim-core'
import { createKnex } from '../server/database/connection'
import { rebuildLotAggregates } from '../server/services/analytics/rebuild-aggregates'
import signIns from '../fixtures/demo-sign-ins.json'

// BENCH_DASH_DB keeps a lot of another size beside the usual one (a fresh 10M load takes a quarter of an hour)
const DB = process.env.BENCH_DASH_DB || 'tercet_bench_dash'
const LOT = 'BENCH-DASH-A'
const SIZES = (process.env.BENCH_SIZES ?? '1000000,10000000').split(',').map(Number)
const RATE = Number(process.env.BENCH_INGEST_RATE || 30)

const say = (m: string) => process.stderr.write(`[bench:dashboard] ${new Date().toISOString().slice(11, 19)} ${m}\n`)
const out = (o: unknown) => process.stdout.write(JSON.stringify(o) + '\n')
const load = () => loadavg().map((x) => +x.toFixed(2))

let server: ChildProcess | undefined
for (const sig of ['SIGINT', 'SIGTERM'] as const) process.on(sig, () => { void stopChild(server).finally(() => process.exit(130)) })
process.on('exit', () => { server?.kill('SIGKILL') })

/** The lot's measurements now: the exact count at the start of measuring plus the ids handed out since. */
function counter(db: Knex, lotId: number) {
  let base = 0
  let maxAt = 0
  const maxId = async () => Number((await db.raw('SELECT COALESCE(MAX(id), 0) AS m FROM measurements'))[0][0].m)
  return {
    async reset() {
      maxAt = await maxId()
      base = Number((await db.raw('SELECT COUNT(*) AS n FROM measurements WHERE lot_id = ?', [lotId]))[0][0].n)
      return base
    },
    async now() { return base + (await maxId()) - maxAt },
  }
}

async function stationLimits(db: Knex, lot: DashLot): Promise<SpecLimit[]> {
  const rows = await db('spec_limits').where({ revision_id: lot.revisions.second })
  return rows.map((l: any) => ({ step: l.step, name: l.name, offsetHz: Number(l.qualifier) || undefined, lsl: l.lsl, usl: l.usl }))
}

async function naiveAggregate(db: Knex, lotId: number): Promise<number> {
  const times: number[] = []
  for (let i = 0; i < 3; i++) {
    const s = performance.now()
    await db.raw('SELECT step, name, qualifier, COUNT(*), AVG(value), STDDEV_SAMP(value) FROM measurements WHERE lot_id = ? GROUP BY step, name, qualifier', [lotId])
    times.push(performance.now() - s)
    if (times[0]! > 60_000) break
  }
  times.sort((a, b) => a - b)
  return times[Math.floor(times.length / 2)]!
}

async function main() {
  const env = loadEnv()
  const reuse = process.env.BENCH_REUSE === '1'
  say(`preparing the build and ${reuse ? 'the loaded' : 'a fresh'} bench database…`)
  await prepareDatabase(env, DB, { recreate: !reuse, seed: true, tokenFile: resolve(root, `.data/${DB}-station-tokens.json`) })
  buildIfChanged()
  const settings = dbSettings(env, DB)
  const db = createKnex({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: DB })
  const { lot, tokens } = await openDashLot(db, LOT, Math.round((0.4 * Math.min(...SIZES)) / measurementsPerUnit(['tune', 'burn-in', 'final'])))
  const limits = await stationLimits(db, lot)
  const count = counter(db, lot.id)

  const port = await freePort()
  const url = `http://${HOST}:${port}`
  server = startBuiltServer(builtEntry(), { ...serverEnv(env, settings), PORT: String(port), HOST, NODE_ENV: 'production' }, [], openSync(resolve(root, '.data/bench-dash-server.log'), 'w'))
  try {
    await waitHealthy(url, server)
    const login = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }) })
    if (!login.ok) throw new Error(`signing in answered ${login.status}`)
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')

    for (const size of SIZES) {
      const t0 = performance.now()
      let have = await count.reset()
      if (have < size * 0.98) {
        say(`loading up to ${size} measurements (the lot holds ${have})…`)
        await growLot(db, lot, have, size, (units) => say(`  ${units} bulk units`))
        say('rebuilding the lot aggregates…')
        const r0 = performance.now()
        await rebuildLotAggregates(db, lot.id)
        say(`  rebuilt in ${((performance.now() - r0) / 1000).toFixed(1)} s`)
        have = await count.reset()
      }
      const loadSeconds = +((performance.now() - t0) / 1000).toFixed(1)
      const units = await bulkUnits(db, lot)
      out({ size, measurements: have, bulkUnits: units, loadSeconds, loadAverage: load() })

      // the page on the warm server alone first, then again below with the stations posting
      say('the lot page in Chromium, no station posting')
      out({ ...(await timeLotPage(url, LOT, count.now)), stationsPosting: false })

      say(`stations posting at ${RATE} runs/s while measuring…`)
      const stations = startStations({ url, part: PART, lot: LOT, tokens: tokens.map((t) => t.token), runsPerSec: RATE, limits, seed: size % 1000 + 7 })
      try {
        await new Promise((r) => setTimeout(r, 5000))
        const api = `${url}/api/lots/${encodeURIComponent(LOT)}`
        const deepPage = Math.max(1, Math.floor((units / 50) * 0.8))
        const routes: [string, string, 'full' | 'first'][] = [
          ['GET /api/lots/:code', api, 'full'],
          ['GET /api/lots/:code/summary', `${api}/summary`, 'full'],
          ['GET /api/lots/:code/summary?attempts=all', `${api}/summary?attempts=all`, 'full'],
          ['GET /api/lots/:code/parameters/output_power?step=final', `${api}/parameters/output_power?step=final`, 'full'],
          ['GET /api/lots/:code/parameters/output_power?step=final&attempts=all', `${api}/parameters/output_power?step=final&attempts=all`, 'full'],
          ['GET /api/lots/:code/units', `${api}/units`, 'full'],
          ['GET /api/lots/:code/units?sort=verdict', `${api}/units?sort=verdict`, 'full'],
          ['GET /api/lots/:code/units?verdict=fail', `${api}/units?verdict=fail`, 'full'],
          [`GET /api/lots/:code/units?station=${BENCH_STATIONS[1]}`, `${api}/units?station=${BENCH_STATIONS[1]}`, 'full'],
          // a start 100 bulk units share at either size (the first 38,947 at 1M): the same answer to time at both
          [`GET /api/lots/:code/units?serial=${SERIAL_PREFIX}0000012`, `${api}/units?serial=${SERIAL_PREFIX}0000012`, 'full'],
          [`GET /api/lots/:code/units?page=${deepPage}`, `${api}/units?page=${deepPage}`, 'full'],
          ['GET /api/lots/:code/phase-noise', `${api}/phase-noise`, 'full'],
          ['GET /api/lots/:code/units.csv (first byte)', `${api}/units.csv`, 'first'],
        ]
        const figures: RouteFigure[] = []
        for (const [route, target, how] of routes) {
          say(`  ${route}`)
          const fig = await timeRoute(route, () => (how === 'full' ? fullRequest(target, cookie) : firstChunk(target, cookie)), count.now)
          figures.push(fig)
          out(fig)
        }
        // the page before the naive aggregate: its scan of every measurement pushes the lot's indexes out of the
        // buffer pool, which would time the page on a cold database instead of a warm one
        say('  the lot page in Chromium')
        out({ ...(await timeLotPage(url, LOT, count.now)), stationsPosting: true })
        const summary = figures[1]!
        say('  naive SQL aggregate')
        const naiveMs = await naiveAggregate(db, lot.id)
        out({ measurements: await count.now(), summaryP50Ms: summary.p50Ms, summaryP95Ms: summary.p95Ms, naiveMs: +naiveMs.toFixed(1), loadSeconds })
      } finally {
        const report = await stations.stop()
        out({ ingest: 'stations posting while measuring', ...report, stations: tokens.length, measurements: await count.now(), loadAverage: load() })
      }
    }
  } finally {
    await stopChild(server)
    await db.destroy()
  }
}

main().catch((e) => { console.error(e); process.exit(1) })

