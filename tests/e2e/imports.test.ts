import { spawnSync } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { resolve } from 'node:path'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { RUN_CSV_COLUMNS } from '../../shared/utils/run-csv'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { tripleRun } from '../support/stations'

const STATION = 'ATE-T3-01'
let db: Knex
let admin: string
let engineer: string

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn(ROLE_ACCOUNTS.admin)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
})

afterAll(async () => {
  await db.destroy()
})

async function upload(body: string | Buffer, q: Record<string, string>, cookie = admin) {
  const r = await fetch(`${baseUrl()}/api/imports?${new URLSearchParams(q)}`, {
    method: 'POST', headers: { cookie, 'content-type': 'application/octet-stream', accept: 'application/json' }, body,
  })
  return { status: r.status, headers: r.headers, body: await r.json() as any }
}

async function settled(jobId: string, cookie = admin) {
  const deadline = Date.now() + 60_000
  for (;;) {
    const r = await call('GET', `/api/imports/${jobId}`, { cookie })
    expect(r.status).toBe(200)
    if (r.body.status !== 'running') return r.body
    if (Date.now() > deadline) throw new Error(`import ${jobId} did not finish`)
    await new Promise((res) => setTimeout(res, 100))
  }
}

async function importFile(body: string | Buffer, format: 'jsonl' | 'csv', cookie = admin) {
  const r = await upload(body, { station: STATION, format, fileName: `test.${format}` }, cookie)
  expect(r.status, JSON.stringify(r.body)).toBe(202)
  expect(r.headers.get('location')).toBe(`/api/imports/${r.body.jobId}`)
  return settled(r.body.jobId, cookie)
}

async function storedRuns(ids: string[]) {
  return db('test_runs as r').join('stations as s', 's.id', 'r.station_id').whereIn('r.uuid', ids).select('r.uuid', 's.name as station')
}

function csvRows(run: ReturnType<typeof tripleRun>): string[][] {
  return run.measurements.map((m: Record<string, unknown>) => RUN_CSV_COLUMNS.map((c) => {
    const v = c in m ? m[c] : (run as Record<string, unknown>)[c]
    return v === undefined || v === null ? '' : String(v)
  }))
}

const csv = (rows: string[][]) => rows.map((r) => r.join(',')).join('\r\n') + '\r\n'

describe('imported history and station liveness', () => {
  it('an import does not make its station look recently seen', async () => {
    const name = `IMP-${Date.now().toString(36)}`
    const made = await call('POST', '/api/stations', { cookie: admin, body: { name } })
    expect(made.status).toBe(201)
    const r = await upload(JSON.stringify(tripleRun()) + '\n', { station: name, format: 'jsonl' })
    expect(r.status).toBe(202)
    const job = await settled(r.body.jobId)
    expect(job.runsCreated).toBe(1)
    await new Promise((res) => setTimeout(res, 300))
    const station = await db('stations').where({ name }).first('last_seen_at')
    expect(station.last_seen_at).toBeNull()
  })
})

describe('JSONL import', () => {
  const runs = [tripleRun(), tripleRun(), tripleRun()]
  const file = runs.map((r) => JSON.stringify(r)).join('\n') + '\n\n'

  it('stores every run under the chosen station, counts them and writes one audit row', async () => {
    const job = await importFile(file, 'jsonl')
    expect(job).toMatchObject({
      status: 'done', format: 'jsonl', fileName: 'test.jsonl', station: { name: STATION }, createdBy: { name: 'Ada Quillon' },
      linesTotal: 4, linesDone: 4, runsDone: 3, runsCreated: 3, runsReplayed: 0, runsRejected: 0, error: null, stalled: false, rejections: [],
    })
    expect(job.finishedAt).not.toBeNull()
    const stored = await storedRuns(runs.map((r) => r.id))
    expect(stored).toHaveLength(3)
    expect(new Set(stored.map((s: any) => s.station))).toEqual(new Set([STATION]))
    const audit = await db('audit_log').where({ entity: 'import_job', entity_id: job.id })
    expect(audit).toHaveLength(1)
    expect(audit[0].action).toBe('import')
    const after = typeof audit[0].after === 'string' ? JSON.parse(audit[0].after) : audit[0].after
    expect(after).toMatchObject({ status: 'done', runsCreated: 3, runsReplayed: 0, runsRejected: 0, station: STATION })
  })

  it('importing the same file again adds nothing: every run is a replay', async () => {
    const before = await db('test_runs').count({ n: '*' })
    const job = await importFile(file, 'jsonl')
    expect(job).toMatchObject({ status: 'done', runsDone: 3, runsCreated: 0, runsReplayed: 3, runsRejected: 0 })
    const afterCount = await db('test_runs').count({ n: '*' })
    expect(Number(afterCount[0]!.n)).toBe(Number(before[0]!.n))
  })

  it('rejects lines that are not JSON, break the schema or reuse an id, and stores the rest', async () => {
    const good = tripleRun()
    const taken = runs[0]!
    const lines = [
      JSON.stringify(good),
      '{"id": ',
      JSON.stringify({ ...tripleRun(), serial: 'bad serial!' }),
      JSON.stringify({ ...taken, measurements: taken.measurements.slice(1) }),
    ]
    const job = await importFile(lines.join('\n'), 'jsonl')
    expect(job).toMatchObject({ status: 'done', linesTotal: 4, runsDone: 4, runsCreated: 1, runsRejected: 3 })
    expect(job.rejections.map((r: any) => [r.line, r.status])).toEqual([[2, 400], [3, 400], [4, 409]])
    expect(job.rejections[0].reason).toMatch(/not valid JSON/)
    expect(job.rejections[1].reason).toMatch(/\/serial: must match pattern/)
    expect(job.rejections[2].runId).toBe(taken.id)
    expect(await storedRuns([good.id])).toHaveLength(1)
  })
})

describe('CSV import', () => {
  it('rejects the run of a bad row, naming its line, and stores the good runs', async () => {
    const [a, b, c] = [tripleRun(), tripleRun(), tripleRun()]
    const rowsB = csvRows(b)
    const valueAt = RUN_CSV_COLUMNS.indexOf('value')
    rowsB[3]![valueAt] = 'abc'
    const lines = [[...RUN_CSV_COLUMNS], ...csvRows(a), ...rowsB, ...csvRows(c)]
    const badLine = 1 + a.measurements.length + 4
    const job = await importFile(csv(lines), 'csv')
    expect(job).toMatchObject({ status: 'done', linesTotal: lines.length, runsDone: 3, runsCreated: 2, runsRejected: 1 })
    expect(job.rejections).toHaveLength(1)
    expect(job.rejections[0]).toMatchObject({ line: badLine, runId: b.id, status: 400 })
    expect(job.rejections[0].reason).toContain(`line ${badLine} value: must be number`)
    const stored = await storedRuns([a.id, b.id, c.id])
    expect(stored.map((s: any) => s.uuid).sort()).toEqual([a.id, c.id].sort())
    const measured = await db('measurements as m').join('test_runs as r', 'r.id', 'm.run_id').where('r.uuid', a.id).where('m.derived', false).count({ n: '*' })
    expect(Number(measured[0]!.n)).toBe(a.measurements.length)
  })

  it('answers 400 naming an unknown column, before storing anything', async () => {
    const run = tripleRun()
    const header = [...RUN_CSV_COLUMNS, 'colour']
    const rows = csvRows(run).map((r) => [...r, 'red'])
    const jobsBefore = await db('import_jobs').count({ n: '*' })
    const r = await upload(csv([header, ...rows]), { station: STATION, format: 'csv' })
    expect(r.status).toBe(400)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.detail).toContain('unknown column "colour"')
    expect(r.body.unknownColumns).toEqual(['colour'])
    expect(await storedRuns([run.id])).toHaveLength(0)
    const jobsAfter = await db('import_jobs').count({ n: '*' })
    expect(Number(jobsAfter[0]!.n)).toBe(Number(jobsBefore[0]!.n))
  })

  it('answers 400 naming a missing required column', async () => {
    const header = RUN_CSV_COLUMNS.filter((c) => c !== 'unit')
    const r = await upload(csv([header]), { station: STATION, format: 'csv' })
    expect(r.status).toBe(400)
    expect(r.body.missingColumns).toEqual(['unit'])
  })
})

describe('refused uploads', () => {
  it('a file that is not UTF-8 is refused whole with 400, nothing stored', async () => {
    const good = tripleRun()
    const latin1 = Buffer.from(JSON.stringify({ ...tripleRun(), operator: 'Jürgen' }) + '\n', 'latin1')
    const body = Buffer.concat([Buffer.from(JSON.stringify(good) + '\n'), latin1])
    const r = await upload(body, { station: STATION, format: 'jsonl' })
    expect(r.status).toBe(400)
    expect(r.body.lines).toEqual([2])
    expect(r.body.detail).toMatch(/Line 2 is not UTF-8/)
    expect(await storedRuns([good.id])).toHaveLength(0)
  })

  it('needs a known station and a format', async () => {
    const body = JSON.stringify(tripleRun())
    const noStation = await upload(body, { format: 'jsonl' })
    expect(noStation.status).toBe(400)
    expect(noStation.body.errors.map((e: any) => e.message).join(' ')).toContain('"station"')
    const unknown = await upload(body, { station: 'NO-SUCH-STATION', format: 'jsonl' })
    expect(unknown.status).toBe(400)
    expect(unknown.body.detail).toContain('NO-SUCH-STATION')
    const badFormat = await upload(body, { station: STATION, format: 'xlsx' })
    expect(badFormat.status).toBe(400)
  })

  it('a file without runs is refused', async () => {
    const r = await upload('\n\n', { station: STATION, format: 'jsonl' })
    expect(r.status).toBe(400)
    expect(r.body.detail).toMatch(/no runs/)
  })
})

describe('rejections download', () => {
  it('lists every rejected line, with formula-looking cells escaped', async () => {
    const header = [...RUN_CSV_COLUMNS]
    const bad = (id: string) => csvRows({ ...tripleRun(), id } as any).slice(0, 1)
    const job = await importFile(csv([header, ...bad('=HYPERLINK("http://x.invalid")'), ...bad('@SUM(A1)'), ...bad('-1+2')]), 'csv')
    expect(job.runsRejected).toBe(3)
    const r = await fetch(`${baseUrl()}/api/imports/${job.id}/rejections.csv`, { headers: { cookie: engineer } })
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toContain('text/csv')
    expect(r.headers.get('content-disposition')).toContain('attachment')
    const text = await r.text()
    const lines = text.trim().split('\r\n')
    expect(lines[0]).toBe('line,runId,status,reason')
    expect(lines).toHaveLength(4)
    expect(lines[1]).toMatch(/^2,"'=HYPERLINK\(""http:\/\/x\.invalid""\)",400,/)
    expect(lines[2]).toMatch(/^3,'@SUM\(A1\),400,/)
    expect(lines[3]).toMatch(/^4,'-1\+2,400,/)
    for (const l of lines.slice(1)) expect(l).not.toMatch(/,[=+\-@]/)
  })

  it('an unknown job is a 404', async () => {
    expect((await call('GET', `/api/imports/${randomUUID()}`, { cookie: admin })).status).toBe(404)
    expect((await call('GET', `/api/imports/${randomUUID()}/rejections.csv`, { cookie: admin })).status).toBe(404)
    expect((await call('GET', '/api/imports/not-a-uuid', { cookie: admin })).status).toBe(404)
  })
})

describe('cancelling an import', () => {
  const lot = `T3-CX-${Date.now().toString(36)}`
  const runs = Array.from({ length: 3000 }, () => tripleRun({ lot }))
  const file = runs.map((r) => JSON.stringify(r)).join('\n') + '\n'

  it('stops a running import at its next progress write, keeps what it stored, and importing again continues', async () => {
    const r = await upload(file, { station: STATION, format: 'jsonl', fileName: 'long.jsonl' })
    expect(r.status).toBe(202)
    const asked = await call('POST', `/api/imports/${r.body.jobId}/cancel`, { cookie: engineer })
    expect(asked.status, JSON.stringify(asked.body)).toBe(200)
    expect(asked.body.cancelRequestedAt).not.toBeNull()
    const job = await settled(r.body.jobId)
    expect(job).toMatchObject({ status: 'cancelled', cancelledBy: { name: 'Milo Harrow' }, runsRejected: 0 })
    expect(job.runsDone).toBeLessThan(runs.length)
    expect(job.error).toMatch(/^Stopped after line \d+ of 3000/)
    const stored = await storedRuns(runs.map((x) => x.id))
    expect(stored).toHaveLength(job.runsCreated)
    expect((await call('POST', `/api/imports/${job.id}/cancel`, { cookie: engineer })).status).toBe(409)
    const audit = await db('audit_log').where({ entity: 'import_job', entity_id: job.id }).orderBy('id')
    expect(audit.map((a: any) => a.action)).toEqual(['cancel', 'import'])

    const again = await importFile(file, 'jsonl')
    expect(again).toMatchObject({ status: 'done', runsReplayed: job.runsCreated, runsCreated: runs.length - job.runsCreated, runsRejected: 0 })
  }, 120_000)

  it('marks a stalled import cancelled at once, since no worker is left to stop it', async () => {
    const id = randomUUID()
    const station = await db('stations').where({ name: STATION }).first('id')
    const user = await db('users').where({ email: ROLE_ACCOUNTS.admin }).first('id')
    const old = new Date(Date.now() - 10 * 60_000)
    await db('import_jobs').insert({ id, created_by: user.id, station_id: station.id, file_name: 'left-behind.jsonl', format: 'jsonl', lines_total: 10, started_at: old, updated_at: old })
    expect((await call('GET', `/api/imports/${id}`, { cookie: admin })).body.stalled).toBe(true)
    const r = await call('POST', `/api/imports/${id}/cancel`, { cookie: admin })
    expect(r.status).toBe(200)
    expect(r.body).toMatchObject({ status: 'cancelled', stalled: false, cancelledBy: { name: 'Ada Quillon' } })
    expect(r.body.error).toMatch(/server stopped/)
    expect(r.body.finishedAt).not.toBeNull()
  })

  it('an unknown job is a 404', async () => {
    expect((await call('POST', `/api/imports/${randomUUID()}/cancel`, { cookie: admin })).status).toBe(404)
  })
})

describe('access', () => {
  it('the list shows recent imports to admin and engineer', async () => {
    const r = await call('GET', '/api/imports', { cookie: engineer })
    expect(r.status).toBe(200)
    expect(r.body.imports.length).toBeGreaterThan(0)
    expect(r.body.imports[0]).toMatchObject({ station: { name: STATION }, status: expect.stringMatching(/^(running|done|failed|cancelled)$/) })
  })

  it('an engineer may import', async () => {
    const job = await importFile(JSON.stringify(tripleRun()), 'jsonl', engineer)
    expect(job).toMatchObject({ status: 'done', runsCreated: 1, createdBy: { name: 'Milo Harrow' } })
  })

  for (const who of ['operator', 'quality', 'customer'] as const) {
    it(`${who} is refused with 403, and nothing is stored`, async () => {
      const cookie = await signIn(ROLE_ACCOUNTS[who])
      const run = tripleRun()
      const r = await upload(JSON.stringify(run), { station: STATION, format: 'jsonl' }, cookie)
      expect(r.status).toBe(403)
      expect((await call('GET', '/api/imports', { cookie })).status).toBe(403)
      expect(await storedRuns([run.id])).toHaveLength(0)
    })
  }
})

describe('memory', () => {
  it('a 5,000-run import (over 30 MB) grows the server by less than 150 MB', () => {
    const db = `${process.env.TERCET_TEST_DB || 'tercet_test'}_memcheck`
    const r = spawnSync(resolve(process.cwd(), 'node_modules/.bin/jiti'), [
      'scripts/import-memory-check.ts', '--runs=5000', '--measurements=5', '--trace-points=400', '--max-growth-mb=150', `--db=${db}`,
    ], { cwd: process.cwd(), encoding: 'utf8', env: process.env, timeout: 280_000 })
    const line = r.stdout.trim().split('\n').reverse().find((l) => l.startsWith('{'))
    expect(line, r.stderr).toBeDefined()
    const m = JSON.parse(line!)
    expect(m).toMatchObject({ runs: 5000, status: 'done', runsCreated: 5000, runsRejected: 0 })
    expect(m.fileMb).toBeGreaterThan(30)
    expect(m.rssGrowthMb).toBeLessThan(150)
    expect(r.status).toBe(0)
  }, 300_000)
})
