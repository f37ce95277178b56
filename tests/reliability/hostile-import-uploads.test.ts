// Hostile uploads to POST /api/imports, generated with fast-check. An upload that passes the checks made while it is
// received (UTF-8, a known CSV header, some content) is taken as an import job by design and judged line by line
// afterwards; every line sent here is broken, so every job must end with no run stored. Refused uploads must be
// problem+json; accepted ones are counted apart. Every table but the jobs' own (import_jobs, import_rejections and
// the audit rows of imports) must be as it was.
import { gzipSync } from 'node:zlib'
import fc from 'fast-check'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { ROLE_ACCOUNTS, signIn } from '../support/http'
import { answerFault, healthy, inParallel, send, type RawReply } from '../support/hostile-http'
import { FOREIGN_KEYS, SQL_TEXTS, UNICODE_TEXTS, deepText, hostileValue, toJsonText } from '../support/hostile-values'
import { changedTables, settledTableStates, tableStates, type Allowance, type TableState } from '../support/table-checksums'

const UPLOADS = Number(process.env.TERCET_HOSTILE_UPLOADS ?? 160)
const WIDTH = 4
// an accepted upload adds its job, its rejected lines and one audit row of the import; nothing else
const ALLOWED: Allowance = { tables: ['import_jobs', 'import_rejections'], rowsOf: { audit_log: "entity <> 'import_job'" } }

const rand = mulberry32(7)
const T3 = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const BASE = generateRun({ product: T3, lot: 'T3-2611-A', serial: 'HX-UPLOAD-1', step: 'final', startedAt: new Date(Date.now() - 7_200_000), rand })

// a broken line: the demo run with a foreign key (the run schema refuses unknown properties), or no run at all
const brokenLine: fc.Arbitrary<string> = fc.oneof(
  fc.tuple(fc.constantFrom(...FOREIGN_KEYS), hostileValue).map(([k, v]) => `{${JSON.stringify(k)}:${toJsonText(v) ?? 'null'},${JSON.stringify(BASE).slice(1)}`),
  fc.constantFrom('null', '{', '[]', '"run"', '{}', deepText(10_000), '1e400', ...SQL_TEXTS, ...UNICODE_TEXTS.map((u) => JSON.stringify(u))),
  hostileValue.map((v) => toJsonText(v) ?? 'null'),
)
const CSV_HEADERS = ['', 'id,serial,partNumber', 'runId,serial,partNumber,lot,step,startedAt,finishedAt,name,value,unit', '\uFEFFa,b,c', 'x'.repeat(5000)]
const csvFile = fc.tuple(fc.constantFrom(...CSV_HEADERS), fc.array(fc.array(fc.oneof(fc.constantFrom(...SQL_TEXTS, '"', '=1+1', ''), fc.string({ maxLength: 10 })), { maxLength: 10 }), { maxLength: 20 }))
  .map(([h, rows]) => [h, ...rows.map((r) => r.join(','))].join('\n'))

type Upload = { category: string; query: string; body: string | Buffer; headers?: Record<string, string> }
const upload: fc.Arbitrary<Upload> = fc.oneof(
  fc.array(brokenLine, { minLength: 1, maxLength: 12 }).map((ls) => ({ category: 'jsonl of broken lines', query: 'station=ATE-T3-01&format=jsonl', body: ls.join('\n') })),
  csvFile.map((b) => ({ category: 'hostile csv', query: 'station=ATE-T3-01&format=csv', body: b })),
  fc.constantFrom('', 'station=ATE-T3-01', 'format=jsonl', 'station[]=ATE-T3-01&format=jsonl', 'station=ATE-T3-01&station=X&format=jsonl', `station=${encodeURIComponent("' OR 1=1 --")}&format=jsonl`, 'station=ATE-T3-01&format=xml', 'station=%ED%A0%80&format=csv')
    .map((query) => ({ category: 'hostile query', query, body: '{}' })),
  fc.constantFrom(Buffer.from([0x7b, 0xc0, 0x80, 0x7d]), Buffer.from([0xff, 0xfe, 0x00]), Buffer.from('{"a":"\ud800"}', 'latin1'))
    .map((body) => ({ category: 'not UTF-8', query: 'station=ATE-T3-01&format=jsonl', body })),
  brokenLine.map((l) => ({ category: 'compressed', query: 'station=ATE-T3-01&format=jsonl', body: gzipSync(l), headers: { 'content-encoding': 'gzip' } })),
  brokenLine.map((l) => ({ category: 'form upload', query: 'station=ATE-T3-01&format=jsonl', body: l, headers: { 'content-type': 'multipart/form-data; boundary=x' } })),
  fc.constantFrom('', '\n\n', '   ').map((body) => ({ category: 'empty file', query: 'station=ATE-T3-01&format=jsonl', body })),
)

describe('hostile import uploads', () => {
  let db: Knex
  let cookie = ''
  let before: TableState
  const counts: Record<string, number> = {}
  const faults: string[] = []
  const jobs: string[] = []
  let fiveXx = 0

  beforeAll(async () => {
    db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
    cookie = await signIn(ROLE_ACCOUNTS.admin)
    before = await settledTableStates(db, ALLOWED)
  })

  afterAll(async () => {
    await db?.destroy()
  })

  it('hostile uploads are refused with problem+json, or taken as jobs that store nothing', async () => {
    await fc.assert(fc.asyncProperty(fc.array(upload, { minLength: WIDTH, maxLength: WIDTH }), async (ups) => {
      const n = faults.length
      await inParallel(ups, WIDTH, async (u) => {
        counts[u.category] = (counts[u.category] ?? 0) + 1
        let r: RawReply
        try {
          const type = u.query.includes('format=csv') ? 'text/csv' : 'application/x-ndjson'
          r = await send({ method: 'POST', path: `/api/imports?${u.query}`, body: u.body, headers: { cookie, 'content-type': type, ...u.headers } })
        } catch (e) { faults.push(`${u.category}: no answer (${(e as Error).message})`); return }
        if (r.status >= 500) fiveXx += 1
        const fault = answerFault(r)
        if (fault) { faults.push(`${u.category}: ${fault}`); return }
        if (r.status === 202) jobs.push(JSON.parse(r.text).jobId)
        else if (r.status < 400) faults.push(`${u.category}: answered ${r.status}`)
      })
      if (faults.length > n) throw new Error(faults.slice(n, n + 5).join('\n'))
      return true
    }), { numRuns: Math.ceil(UPLOADS / WIDTH) })
    expect(faults.slice(0, 20)).toEqual([])
  })

  it('every job taken ends with no run stored, and every other table is as it was', async () => {
    const stored: string[] = []
    for (const id of jobs) {
      const deadline = Date.now() + 120_000
      for (;;) {
        const r = await send({ method: 'GET', path: `/api/imports/${id}`, headers: { cookie } })
        expect(r.status).toBe(200)
        const job = JSON.parse(r.text)
        if (job.status !== 'running') { if (job.runsCreated !== 0 || job.runsReplayed !== 0) stored.push(`${id}: ${job.runsCreated} created, ${job.runsReplayed} replayed`); break }
        if (Date.now() > deadline) throw new Error(`import ${id} did not finish`)
        await new Promise((res) => setTimeout(res, 200))
      }
    }
    expect(await healthy()).toBe(true)
    const after = await tableStates(db, ALLOWED)
    const [[audit]] = await db.raw("SELECT COUNT(*) AS n FROM audit_log WHERE entity = 'import_job' AND entity_id IN (?)", [jobs.length ? jobs : ['-']]) as [{ n: number }[]]
    console.log(JSON.stringify({ suite: 'hostile-import-uploads', uploads: Object.values(counts).reduce((a, b) => a + b, 0), acceptedAsJobs: jobs.length, fiveXx, faults: faults.length, perCategory: counts }))
    expect(fiveXx).toBe(0)
    expect(stored).toEqual([])
    expect(Number(audit!.n)).toBe(jobs.length)
    expect(changedTables(before, after)).toEqual([])
  })
})
