// npm run bench:certs — certificate documents through the built server, on a fresh bench database, loopback only.
// Builds 1,000 tested units of the demo tripler on one shipment and issues their certificates in one transaction
// (issue1000Ms), then, with the background renderer off, downloads each certificate once: every download renders
// its document on demand and stores it (certP50Ms, certP95Ms over the 1,000). Then downloads the shipment's ZIP of
// the 1,000 stored documents (zip1000Ms, and zipPeakRssMb: the server's resident memory above its level before the
// download, at its peak, sampled every 20 ms). certMinMs is the fastest download (what one costs with the machine
// otherwise idle); loadAvg1 is the machine's one-minute load average at the end, since other work on the machine
// stretches every figure. Prints one JSON line; progress goes to stderr.
import { spawn } from 'node:child_process'
import { readFileSync } from 'node:fs'
import net from 'node:net'
import { loadavg } from 'node:os'
import { resolve } from 'node:path'
import { performance } from 'node:perf_hooks'
import { dbSettings, loadEnv, root, serverEnv } from './lib/env.mjs'
import { prepareDatabase } from './lib/database.mjs'
import { buildIfChanged } from './lib/build.mjs'
import { createKnex } from '../server/database/connection'
import { testedShipment } from '../fixtures/tested-shipment'
import signIns from '../fixtures/demo-sign-ins.json'

const DB = 'tercet_bench_certs'
const UNITS = Number(process.env.BENCH_CERT_UNITS || 1000)
const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const s = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => { const p = (s.address() as net.AddressInfo).port; s.close(() => done(p)) })
  })
}
const percentile = (sorted: number[], p: number) => sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))]!
const rssMb = (pid: number) => Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))![1]) / 1024

async function main() {
  const env = loadEnv()
  await prepareDatabase(env, DB, { recreate: true, seed: true, tokenFile: resolve(root, '.data/bench-certs-tokens.json') })
  buildIfChanged()
  const settings = dbSettings(env, DB)
  const db = createKnex({ host: '127.0.0.1', port: settings.port, user: settings.user, password: settings.password, database: DB })

  say(`testing ${UNITS} units through every step…`)
  const set = await testedShipment(db, { tag: 'BENCH-CERT', count: UNITS, issue: false })
  const quality = set.qualityId
  const { issueCertificates } = await import('../server/services/certificates/issue')
  const t0 = performance.now()
  const issued = await db.transaction((trx) => issueCertificates(trx, { shipmentId: set.shipmentId, issuedBy: quality, now: new Date(), units: set.units.map((u) => ({ unitId: u.unitId })) }))
  const issueMs = performance.now() - t0
  say(`issued ${issued.length} certificates in ${issueMs.toFixed(0)} ms`)

  const port = await freePort()
  const server = spawn(process.execPath, [resolve(root, process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')], {
    env: { ...serverEnv(env, settings), PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production', TERCET_CERT_RENDERER: 'off' }, stdio: 'ignore',
  })
  try {
    const url = `http://127.0.0.1:${port}`
    for (let i = 0; i < 150; i++) { try { if ((await fetch(`${url}/api/health`)).ok) break } catch { /* starting */ } await new Promise((r) => setTimeout(r, 200)) }
    const login = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'quality@tercet.test', password: signIns.password }) })
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')

    say('downloading each certificate once (rendered on demand)…')
    const times: number[] = []
    for (const c of issued) {
      const s = performance.now()
      const r = await fetch(`${url}/api/certificates/${c.number}.pdf`, { headers: { cookie } })
      if (r.status !== 200) throw new Error(`${c.number}.pdf answered ${r.status}: ${await r.text()}`)
      await r.arrayBuffer()
      times.push(performance.now() - s)
    }
    times.sort((a, b) => a - b)

    say('downloading the shipment ZIP…')
    await new Promise((r) => setTimeout(r, 1000))
    const before = rssMb(server.pid!)
    let peak = before
    const sampler = setInterval(() => { peak = Math.max(peak, rssMb(server.pid!)) }, 20)
    const z0 = performance.now()
    const zip = await fetch(`${url}/api/shipments/${set.shipmentId}/certificates.zip`, { headers: { cookie } })
    let zipBytes = 0
    if (zip.status === 200 && zip.body) for await (const chunk of zip.body) zipBytes += (chunk as Uint8Array).length
    const zipMs = performance.now() - z0
    clearInterval(sampler)
    peak = Math.max(peak, rssMb(server.pid!))
    const zipOk = zip.status === 200
    if (!zipOk) say(`the ZIP route answered ${zip.status}: no ZIP figures`)
    else say(`ZIP of ${zipBytes} bytes`)

    console.log(JSON.stringify({
      certP50Ms: +percentile(times, 0.5).toFixed(1), certP95Ms: +percentile(times, 0.95).toFixed(1), certMinMs: +times[0]!.toFixed(1),
      zip1000Ms: zipOk ? +zipMs.toFixed(0) : null, zipPeakRssMb: zipOk ? +(peak - before).toFixed(1) : null,
      issue1000Ms: +issueMs.toFixed(0), certificates: issued.length, zipBytes: zipOk ? zipBytes : null, loadAvg1: +loadavg()[0]!.toFixed(2),
    }))
  } finally {
    server.kill('SIGTERM')
    await db.destroy()
  }
}

main().catch((e) => { console.error(e); process.exit(1) })
