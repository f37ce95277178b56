// An import survives its server being killed: the upload is kept in the database, and a restarted server takes the
// job's lease once it runs out and carries on from the job's line cursor, without the file being sent again.
//
// Runs on its own database (tercet_faults_import, created afresh on the project's MariaDB, which it starts if needed)
// against the built server. Bring the build up once, e.g. with
//   TERCET_DB_PORT=<port> npm test -- tests/e2e/imports.test.ts
// then
//   TERCET_DB_PORT=<port> TERCET_FAULTS=1 npx vitest run --project faults tests/reliability/faults/import-resume.test.ts
// (`npm run test:reliability` runs it with the other fault tests).
import { createHash } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { prepareDatabase } from '../../../scripts/lib/database.mjs'
import { buildIfChanged } from '../../../scripts/lib/build.mjs'
import { dbSettings, loadEnv, serverEnv } from '../../../scripts/lib/env.mjs'
import { createKnex } from '../../../server/database/connection'
import { seedDemoCatalogue } from '../../../server/database/seeds/demo'
import { DEMO_PRODUCTS } from '../../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../../fixtures/run-generator'
import signIns from '../../../fixtures/demo-sign-ins.json'
import { startKillableServer, type KillableServer } from '../../support/killable-server'

const DATABASE = process.env.TERCET_FAULTS_IMPORT_DB || 'tercet_faults_import'
const RUNS = Number(process.env.TERCET_FAULTS_IMPORT_RUNS || 15_000)
const STATION = 'ATE-T3-01'
const PART = 'VFW-T3-375'
const LEASE_MS = 3000

let db: Knex
let env: Record<string, string | undefined>
const servers: KillableServer[] = []

beforeAll(async () => {
  buildIfChanged()
  const base = loadEnv()
  const settings = await prepareDatabase(base, DATABASE, { recreate: true, seed: false })
  db = createKnex({ host: '127.0.0.1', port: settings.port, user: settings.user, password: settings.password, database: DATABASE }, { min: 0, max: 4 })
  await seedDemoCatalogue(db)
  const { TERCET_TRUST_PROXY: _proxy, ...rest } = serverEnv(base, dbSettings(base, DATABASE))
  env = { ...rest, TERCET_IMPORT_LEASE_MS: String(LEASE_MS), TERCET_SMTP_HOST: '' }
})

afterAll(async () => {
  for (const s of servers) await s.stop()
  await db?.destroy()
})

function runsFile(): { text: string; ids: string[] } {
  const product = DEMO_PRODUCTS.find((p) => p.partNumber === PART)!
  const rand = mulberry32(20261202)
  const tag = Date.now().toString(36)
  const start = Date.now() - 30 * 86_400_000
  const ids: string[] = []
  const lines: string[] = []
  for (let i = 0; i < RUNS; i++) {
    const run = generateRun({ product, lot: `KILL-${tag}-${Math.floor(i / 1000)}`, serial: `KILL${tag}-${i}`, step: 'final', startedAt: new Date(start + i * 10_000), rand, withReference: false })
    run.measurements = run.measurements.slice(0, 5)
    ids.push(run.id)
    lines.push(JSON.stringify(run))
  }
  return { text: lines.join('\n') + '\n', ids }
}

async function signIn(url: string): Promise<string> {
  const r = await fetch(`${url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }) })
  expect(r.status).toBe(200)
  return r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
}

const jobRow = (id: string) => db('import_jobs').where({ id }).first()

describe('an import whose server is killed mid-way', () => {
  it('is carried on by the restarted server from its line cursor and ends done, every run stored once', async () => {
    const file = runsFile()
    const first = await startKillableServer(env)
    servers.push(first)
    const r = await fetch(`${first.url}/api/imports?station=${STATION}&format=jsonl&fileName=killed.jsonl`, {
      method: 'POST', headers: { cookie: await signIn(first.url), 'content-type': 'application/x-ndjson' }, body: file.text,
    })
    expect(r.status).toBe(202)
    const { jobId } = await r.json() as { jobId: string }

    // kill the server once a part of the file is stored, well before its end
    const deadline = Date.now() + 120_000
    let atKill: any
    for (;;) {
      atKill = await jobRow(jobId)
      if (atKill.lines_done >= RUNS * 0.15) break
      expect(atKill.status, 'the import ended before the server could be killed; raise TERCET_FAULTS_IMPORT_RUNS').toBe('running')
      if (Date.now() > deadline) throw new Error('the import made no progress')
      await new Promise((res) => setTimeout(res, 50))
    }
    await first.kill()
    atKill = await jobRow(jobId)
    expect(atKill.status).toBe('running')
    expect(atKill.lines_done).toBeLessThan(RUNS)
    const storedAtKill = Number((await db('import_upload_chunks').where({ import_id: jobId }).count({ n: '*' }).first())!.n)
    expect(storedAtKill).toBe(atKill.upload_chunks)

    const second = await startKillableServer(env)
    servers.push(second)
    const cookie = await signIn(second.url)
    let job: any
    const end = Date.now() + 600_000
    for (;;) {
      job = await (await fetch(`${second.url}/api/imports/${jobId}?rejections=5`, { headers: { cookie } })).json()
      if (job.status !== 'running') break
      if (Date.now() > end) throw new Error(`the import did not finish after the restart: ${JSON.stringify(job)}`)
      await new Promise((res) => setTimeout(res, 250))
    }

    expect(job).toMatchObject({ status: 'done', linesTotal: RUNS, linesDone: RUNS, runsDone: RUNS, runsRejected: 0 })
    expect(job.resumes).toBeGreaterThanOrEqual(1)
    // counted once each: runs posted again after the kill (written after the last progress write) count as replays
    expect(job.runsCreated + job.runsReplayed).toBe(RUNS)

    // the upload was sent once: one job, the stored file as received, now deleted with the job's end
    expect(Number((await db('import_jobs').count({ n: '*' }).first())!.n)).toBe(1)
    const row = await jobRow(jobId)
    expect(row.upload_sha256).toBe(createHash('sha256').update(file.text).digest('hex'))
    expect(Number(row.upload_bytes)).toBe(Buffer.byteLength(file.text))
    expect(Number((await db('import_upload_chunks').count({ n: '*' }).first())!.n)).toBe(0)
    const audit = (await db('audit_log').where({ entity: 'import_job', entity_id: jobId }).orderBy('id')).map((a: any) => a.action)
    expect(audit.filter((a: string) => a === 'import')).toHaveLength(1)
    expect(audit).toContain('resume')

    // every run of the file stored exactly once, none partly: the same number of measurement rows for each
    const [[runs]] = await db.raw('SELECT COUNT(*) AS n, COUNT(DISTINCT uuid) AS distinctIds FROM test_runs')
    expect(Number(runs.n)).toBe(RUNS)
    expect(Number(runs.distinctIds)).toBe(RUNS)
    const missing = await db('test_runs').whereIn('uuid', file.ids.slice(0, 1000)).count({ n: '*' }).first()
    expect(Number(missing!.n)).toBe(1000)
    const [[m]] = await db.raw('SELECT MIN(c) AS least, MAX(c) AS most, COUNT(*) AS runs FROM (SELECT r.id, COUNT(m.id) AS c FROM test_runs r LEFT JOIN measurements m ON m.run_id = r.id GROUP BY r.id) x')
    expect(Number(m.runs)).toBe(RUNS)
    expect(Number(m.least)).toBeGreaterThanOrEqual(5)
    expect(Number(m.least)).toBe(Number(m.most))
    // and counted once in the lots' yield counters
    const [[y]] = await db.raw('SELECT SUM(runs) AS runs, SUM(units) AS units FROM lot_step_stats')
    expect(Number(y.runs)).toBe(RUNS)
    expect(Number(y.units)).toBe(RUNS)
  })
})
