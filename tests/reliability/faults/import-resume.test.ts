import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_PRODUCTS } from '../../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../../fixtures/run-generator'
import signIns from '../../../fixtures/demo-sign-ins.json'
import { sleep, startRig, type Rig } from './rig'

// An import survives its server being killed (SIGKILL, mid-way through the file): the upload is kept in the
// database, and the restarted server takes the job's lease once it runs out and carries on from the job's line
// cursor, without the file being sent again. Run with `npm run test:reliability -- tests/reliability/faults/import-resume.test.ts`.
const RUNS = Number(process.env.TERCET_FAULTS_IMPORT_RUNS || 15_000)
const STATION = 'ATE-T3-01'
const PART = 'VFW-T3-375'
const tag = Date.now().toString(36).toUpperCase()

let rig: Rig
beforeAll(async () => { rig = await startRig({ TERCET_IMPORT_LEASE_MS: '3000' }) })
afterAll(async () => { await rig?.close() })

function runsFile(): { text: string; ids: string[] } {
  const product = DEMO_PRODUCTS.find((p) => p.partNumber === PART)!
  const rand = mulberry32(20261202)
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

async function signIn(): Promise<string> {
  const r = await fetch(`${rig.app.url}/api/auth/login`, {
    method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': '10.77.0.1' }, body: JSON.stringify({ email: 'engineer@tercet.test', password: signIns.password }),
  })
  expect(r.status).toBe(200)
  return r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
}

const jobRow = (id: string) => rig.db('import_jobs').where({ id }).first()
const ourLots = () => rig.db('lots').where('code', 'like', `KILL-${tag}-%`).select('id')

describe('an import whose server is killed mid-way', () => {
  it('is carried on by the restarted server from its line cursor and ends done, every run stored once', async () => {
    const file = runsFile()
    const fileName = `killed-${tag}.jsonl`
    const r = await fetch(`${rig.app.url}/api/imports?station=${STATION}&format=jsonl&fileName=${fileName}`, {
      method: 'POST', headers: { cookie: await signIn(), 'content-type': 'application/x-ndjson' }, body: file.text,
    })
    expect(r.status).toBe(202)
    const { jobId } = await r.json() as { jobId: string }

    // kill the server once a part of the file is stored, well before its end
    const deadline = Date.now() + 120_000
    for (;;) {
      const row = await jobRow(jobId)
      if (row.lines_done >= RUNS * 0.15) break
      expect(row.status, 'the import ended before the server could be killed; raise TERCET_FAULTS_IMPORT_RUNS').toBe('running')
      if (Date.now() > deadline) throw new Error('the import made no progress')
      await sleep(50)
    }
    await rig.app.kill()
    const atKill = await jobRow(jobId)
    expect(atKill.status).toBe('running')
    expect(atKill.lines_done).toBeLessThan(RUNS)
    expect(Number((await rig.db('import_upload_chunks').where({ import_id: jobId }).count({ n: '*' }).first())!.n)).toBe(atKill.upload_chunks)

    await rig.app.start()
    const cookie = await signIn()
    let job: any
    const end = Date.now() + 600_000
    for (;;) {
      job = await (await fetch(`${rig.app.url}/api/imports/${jobId}?rejections=5`, { headers: { cookie } })).json()
      if (job.status !== 'running') break
      if (Date.now() > end) throw new Error(`the import did not finish after the restart: ${JSON.stringify(job)}`)
      await sleep(250)
    }

    expect(job).toMatchObject({ status: 'done', linesTotal: RUNS, linesDone: RUNS, runsDone: RUNS, runsRejected: 0 })
    expect(job.resumes).toBeGreaterThanOrEqual(1)
    // counted once each: runs posted again after the kill (written after the last progress write) count as replays
    expect(job.runsCreated + job.runsReplayed).toBe(RUNS)

    // the upload was sent once: one job for the file, the stored file as received, deleted at the job's end
    expect(Number((await rig.db('import_jobs').where({ file_name: fileName }).count({ n: '*' }).first())!.n)).toBe(1)
    const row = await jobRow(jobId)
    expect(row.upload_sha256).toBe(createHash('sha256').update(file.text).digest('hex'))
    expect(Number(row.upload_bytes)).toBe(Buffer.byteLength(file.text))
    expect(atKill.upload_sha256).toBe(row.upload_sha256)
    expect(Number((await rig.db('import_upload_chunks').where({ import_id: jobId }).count({ n: '*' }).first())!.n)).toBe(0)
    const audit = (await rig.db('audit_log').where({ entity: 'import_job', entity_id: jobId }).orderBy('id')).map((a: any) => a.action)
    expect(audit.filter((a: string) => a === 'import')).toHaveLength(1)
    expect(audit).toContain('resume')

    // every run of the file stored exactly once, none partly: the same number of measurement rows for each
    const lots = ourLots()
    const [[runs]] = await rig.db.raw('SELECT COUNT(*) AS n, COUNT(DISTINCT uuid) AS ids FROM test_runs WHERE lot_id IN (SELECT id FROM lots WHERE code LIKE ?)', [`KILL-${tag}-%`])
    expect(Number(runs.n)).toBe(RUNS)
    expect(Number(runs.ids)).toBe(RUNS)
    for (let at = 0; at < RUNS; at += 1000) {
      expect(Number((await rig.db('test_runs').whereIn('uuid', file.ids.slice(at, at + 1000)).count({ n: '*' }).first())!.n)).toBe(Math.min(1000, RUNS - at))
    }
    const [[m]] = await rig.db.raw(`SELECT MIN(c) AS least, MAX(c) AS most, COUNT(*) AS runs FROM (SELECT r.id, COUNT(m.id) AS c FROM test_runs r
      LEFT JOIN measurements m ON m.run_id = r.id WHERE r.lot_id IN (SELECT id FROM lots WHERE code LIKE ?) GROUP BY r.id) x`, [`KILL-${tag}-%`])
    expect(Number(m.runs)).toBe(RUNS)
    expect(Number(m.least)).toBeGreaterThanOrEqual(5)
    expect(Number(m.least)).toBe(Number(m.most))
    // and counted once in the lots' yield counters
    const y = await rig.db('lot_step_stats').whereIn('lot_id', lots).sum({ runs: 'runs', units: 'units' }).first()
    expect(Number(y!.runs)).toBe(RUNS)
    expect(Number(y!.units)).toBe(RUNS)
  })
})
