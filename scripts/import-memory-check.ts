// npm run bench:import — imports a large .jsonl file into the built server, on its own database and a free
// loopback port, and samples the server's resident memory meanwhile. Prints one JSON line; exits 1 when the
// import did not finish cleanly or the memory grew beyond the bound.
//   --runs=100000  --measurements=5  --trace-points=0  --max-growth-mb=150  --db=tercet_bench_import  --build
import { spawn, type ChildProcess } from 'node:child_process'
import { once } from 'node:events'
import { createReadStream, createWriteStream, existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs'
import http from 'node:http'
import net from 'node:net'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { buildIfChanged } from './lib/build.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { dbSettings, loadEnv, root, serverEnv } from './lib/env.mjs'
import { createKnex } from '../server/database/connection'
import { seedDemoCatalogue } from '../server/database/seeds/demo'
import { DEMO_PRODUCTS } from '../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../fixtures/run-generator'
import signIns from '../fixtures/demo-sign-ins.json'

const STATION = 'ATE-T3-01'
const PART = 'VFW-T3-375'
const RUNS_PER_LOT = 1000

function option(name: string, fallback: string): string {
  const hit = process.argv.find((a) => a.startsWith(`--${name}=`))
  return hit ? hit.slice(name.length + 3) : fallback
}

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const s = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => {
      const p = (s.address() as net.AddressInfo).port
      s.close(() => done(p))
    })
  })
}

/** Writes the runs one line at a time, waiting for the disk when its buffer is full. */
async function writeRunsFile(path: string, runs: number, measurements: number, tracePoints: number): Promise<void> {
  const product = DEMO_PRODUCTS.find((p) => p.partNumber === PART)!
  const rand = mulberry32(20261202)
  const tag = Date.now().toString(36) + Math.floor(Math.random() * 1296).toString(36)
  const start = Date.now() - 30 * 86_400_000
  const out = createWriteStream(path)
  for (let i = 0; i < runs; i++) {
    const run = generateRun({
      product, lot: `IMP-${tag}-${Math.floor(i / RUNS_PER_LOT)}`, serial: `IMP${tag}-${i}`, step: 'final',
      startedAt: new Date(start + i * 10_000), rand, withReference: false,
    })
    run.measurements = run.measurements.slice(0, measurements)
    if (tracePoints > 0) {
      const points: [number, number][] = []
      for (let k = 0; k < tracePoints; k++) points.push([Math.round(100 * 10 ** (k * 4 / tracePoints)), -120 - Math.round(rand() * 4000) / 100])
      run.traces = [{ name: 'phase_noise_sweep', points }]
    }
    if (!out.write(JSON.stringify(run) + '\n')) await once(out, 'drain')
  }
  out.end()
  await once(out, 'finish')
}

function rssMb(pid: number): number {
  const m = readFileSync(`/proc/${pid}/status`, 'utf8').match(/^VmRSS:\s+(\d+)\s+kB/m)
  return m ? Number(m[1]) / 1024 : NaN
}

async function waitHealthy(base: string, child: ChildProcess): Promise<void> {
  const deadline = Date.now() + 30_000
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the server exited with code ${child.exitCode}`)
    try {
      if ((await fetch(`${base}/api/health`)).ok) return
    } catch { /* not listening yet */ }
    if (Date.now() > deadline) throw new Error('the server did not become healthy within 30 s')
    await new Promise((r) => setTimeout(r, 200))
  }
}

/** Streams the file as the request body; the file is never read into memory here either. */
function upload(base: string, cookie: string, file: string): Promise<{ status: number; body: any }> {
  const url = new URL(`${base}/api/imports?station=${encodeURIComponent(STATION)}&format=jsonl&fileName=memory-check.jsonl`)
  return new Promise((done, fail) => {
    const req = http.request(url, {
      method: 'POST',
      headers: { cookie, 'content-type': 'application/x-ndjson', 'content-length': String(statSync(file).size) },
    }, (res) => {
      let text = ''
      res.setEncoding('utf8')
      res.on('data', (c) => { text += c })
      res.on('end', () => {
        try { done({ status: res.statusCode ?? 0, body: JSON.parse(text) }) } catch { done({ status: res.statusCode ?? 0, body: text }) }
      })
    })
    req.on('error', fail)
    createReadStream(file).pipe(req)
  })
}

async function importAndWait(base: string, cookie: string, file: string): Promise<any> {
  const r = await upload(base, cookie, file)
  if (r.status !== 202) throw new Error(`the upload was answered ${r.status}: ${JSON.stringify(r.body)}`)
  for (;;) {
    const job = await (await fetch(`${base}/api/imports/${r.body.jobId}?rejections=0`, { headers: { cookie } })).json()
    if (job.status !== 'running') return job
    await new Promise((res) => setTimeout(res, 500))
  }
}

async function stop(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return
  const exited = once(child, 'exit')
  child.kill('SIGTERM')
  const timer = setTimeout(() => child.kill('SIGKILL'), 5000)
  await exited
  clearTimeout(timer)
}

export async function importMemoryCheck(opts: { runs: number; measurements: number; tracePoints: number; database: string; build: boolean }) {
  const env = loadEnv()
  const outputDir = resolve(root, process.env.TERCET_OUTPUT_DIR || '.output')
  const entry = resolve(outputDir, 'server/index.mjs')
  if (opts.build || !existsSync(entry)) buildIfChanged()

  const db = await prepareDatabase(env, opts.database, { recreate: true, seed: false })
  const knex = createKnex({ host: '127.0.0.1', port: db.port, user: db.user, password: db.password, database: opts.database }, { min: 0, max: 2 })
  try {
    await seedDemoCatalogue(knex)
  } finally {
    await knex.destroy()
  }

  const dir = mkdtempSync(join(tmpdir(), 'tercet-import-check-'))
  const file = join(dir, 'runs.jsonl')
  let child: ChildProcess | undefined
  try {
    await writeRunsFile(file, opts.runs, opts.measurements, opts.tracePoints)
    const fileMb = statSync(file).size / 1024 / 1024
    const port = await freePort()
    const base = `http://127.0.0.1:${port}`
    const { TERCET_TRUST_PROXY: _proxy, ...rest } = serverEnv(env, dbSettings(env, opts.database))
    child = spawn(process.execPath, [entry], { env: { ...rest, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production' }, stdio: ['ignore', 'ignore', 'inherit'] })
    await waitHealthy(base, child)

    const login = await fetch(`${base}/api/auth/login`, {
      method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'admin@tercet.test', password: signIns.password }),
    })
    if (login.status !== 200) throw new Error(`sign-in failed: ${login.status}`)
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
    // a small import first, so that the baseline includes the code and connections any import loads
    const warm = join(dir, 'warm-up.jsonl')
    await writeRunsFile(warm, 20, opts.measurements, opts.tracePoints)
    await importAndWait(base, cookie, warm)

    const pid = child.pid!
    const rssStartMb = rssMb(pid)
    let rssPeakMb = rssStartMb
    const sampler = setInterval(() => { rssPeakMb = Math.max(rssPeakMb, rssMb(pid)) }, 100)
    const t0 = performance.now()
    let job: any
    try {
      job = await importAndWait(base, cookie, file)
    } finally {
      clearInterval(sampler)
    }
    rssPeakMb = Math.max(rssPeakMb, rssMb(pid))
    const seconds = (performance.now() - t0) / 1000
    const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d
    return {
      runs: job.runsDone as number, seconds: round(seconds), runsPerSec: round(job.runsDone / seconds, 0),
      rssStartMb: round(rssStartMb), rssPeakMb: round(rssPeakMb), rssGrowthMb: round(rssPeakMb - rssStartMb),
      status: job.status as string, runsCreated: job.runsCreated as number, runsRejected: job.runsRejected as number, fileMb: round(fileMb),
    }
  } finally {
    if (child) await stop(child)
    rmSync(dir, { recursive: true, force: true })
  }
}

async function main() {
  const runs = Number(option('runs', '100000'))
  const maxGrowth = Number(option('max-growth-mb', '150'))
  const r = await importMemoryCheck({
    runs, measurements: Number(option('measurements', '5')), tracePoints: Number(option('trace-points', '0')),
    database: option('db', 'tercet_bench_import'), build: process.argv.includes('--build'),
  })
  process.stdout.write(JSON.stringify(r) + '\n')
  const ok = r.status === 'done' && r.runs === runs && r.runsRejected === 0 && r.rssGrowthMb < maxGrowth
  process.exit(ok ? 0 : 1)
}

if (/import-memory-check\.ts$/.test(process.argv[1] ?? '')) {
  main().catch((e) => { console.error(e); process.exit(1) })
}
