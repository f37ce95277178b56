// Hostile bodies to every write route outside the station API (POST, PUT and PATCH under server/api), generated with
// fast-check. The routes come from the tree: each one reads a JSON body checked by a schema, a CSV body, an upload,
// or no body at all, and a route that reads a body in another way fails the suite. Every JSON and CSV body sent is
// invalid by construction, so each must be refused with problem+json and every table left as it was. Uploads are
// taken as import jobs by design (the file is judged line by line afterwards): they are counted apart, and must
// leave every table but the import's own as it was.
import { readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { gzipSync } from 'node:zlib'
import fc from 'fast-check'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { ROLE_ACCOUNTS, signIn } from '../support/http'
import { answerFault, healthy, inParallel, send, serverRss, watchRss, type RawReply, type RawRequest } from '../support/hostile-http'
import { FOREIGN_KEYS, NUMBER_TEXTS, SQL_TEXTS, UNICODE_TEXTS, deepText, hostileValue, toJsonText } from '../support/hostile-values'
import { apiRouteFiles } from '../support/route-files'
import { callerFor, concretePath } from '../support/route-ids'
import { changedTables, settledTableStates, tableStates, type TableState } from '../support/table-checksums'

const PER_ROUTE = Number(process.env.TERCET_HOSTILE_PER_ROUTE ?? 200)
const WIDTH = 8

type Kind = { kind: 'json'; schema: any } | { kind: 'csv' } | { kind: 'upload' } | { kind: 'none' }

/** How the handler reads its body, from its source. */
function bodyKind(file: string): Kind {
  const text = readFileSync(file, 'utf8')
  const schema = text.match(/shared\/schemas\/([a-z0-9-]+\.schema\.json)/)?.[1]
  if (/readValidBody|readJsonLimited|readValidUpload/.test(text)) {
    if (!schema) throw new Error(`${file} reads a JSON body without a schema from shared/schemas`)
    return { kind: 'json', schema: JSON.parse(readFileSync(resolve(process.cwd(), 'shared/schemas', schema), 'utf8')) }
  }
  if (/readCsvBody/.test(text)) return { kind: 'csv' }
  if (/startImport\(/.test(text)) return { kind: 'upload' }
  // any other reader (a name like readXxxBody, readXxxUpload or readJsonXxx) must be taught to this suite, not skipped
  if (/readBody|readRawBody|readMultipart|readFormData|node\.req|getRequestWebStream|\bread[A-Z]\w*(Body|Upload)\(|\breadJson\w*\(/.test(text)) throw new Error(`${file} reads its body in a way this suite does not know`)
  return { kind: 'none' }
}

const WRITES = apiRouteFiles().filter((r) => ['POST', 'PUT', 'PATCH'].includes(r.method) && !r.route.startsWith('/api/v1/')).map((r) => ({ ...r, body: bodyKind(r.file) }))

/** Property names of a schema, and whether an empty body is refused (some field is required in every branch). */
function shapeOf(schema: any): { names: string[]; needsSome: boolean } {
  const branches: any[] = schema.oneOf ?? schema.anyOf ?? [schema]
  const names = [...new Set(branches.flatMap((b) => Object.keys(b.properties ?? {})))]
  return { names, needsSome: branches.every((b) => (b.required ?? []).length > 0) }
}

/** Every branch refuses properties it does not name: one foreign key makes any body invalid. */
function closed(schema: any): boolean {
  const branches: any[] = schema.oneOf ?? schema.anyOf ?? [schema]
  return branches.every((b) => b.additionalProperties === false)
}

const counts: Record<string, number> = {}
const faults: string[] = []
let fiveXx = 0
const cookies: Record<string, string> = {}

function count(category: string) { counts[category] = (counts[category] ?? 0) + 1 }

async function checkRefused(category: string, req: RawRequest, want?: number): Promise<void> {
  count(category)
  let r: RawReply
  try { r = await send(req) } catch (e) { faults.push(`${category} ${req.method} ${req.path}: no answer (${(e as Error).message})`); return }
  if (r.status >= 500) fiveXx += 1
  const fault = answerFault(r) ?? (r.status < 400 ? `accepted an invalid body with ${r.status}: ${r.text.slice(0, 200)}` : undefined) ?? (want && r.status !== want ? `answered ${r.status}, not ${want}` : undefined)
  if (fault) faults.push(`${category} ${req.method} ${req.path}: ${fault}`)
}

// a JSON object of the schema's own fields with hostile values, and one foreign key (so it is never valid)
function hostileObject(names: string[]): fc.Arbitrary<string> {
  return fc.tuple(
    fc.subarray(names, { maxLength: Math.min(4, names.length) }),
    fc.array(hostileValue, { minLength: 4, maxLength: 4 }),
    fc.constantFrom(...FOREIGN_KEYS),
    hostileValue,
    fc.nat(),
  ).map(([fields, values, key, v, at]) => {
    const entries = fields.map((f, i) => `${JSON.stringify(f)}:${toJsonText(values[i]) ?? 'null'}`)
    entries.splice(at % (entries.length + 1), 0, `${JSON.stringify(key)}:${toJsonText(v) ?? 'null'}`)
    return `{${entries.join(',')}}`
  })
}

type Body = { category: string; body: string | Buffer; type?: string | null; encoding?: string; want?: number }

function bodiesFor(names: string[], needsSome: boolean): fc.Arbitrary<Body> {
  const obj = hostileObject(names)
  const choices: fc.Arbitrary<Body>[] = [
    obj.map((b) => ({ category: 'fields with hostile values and a foreign key', body: b, want: 400 })),
    fc.oneof(fc.constantFrom('null', '[]', '"x"', '0', '-0', 'true', '1e400', '[{}]', '"\\ud800"'), fc.jsonValue({ maxDepth: 2 }).filter((v) => v === null || typeof v !== 'object' || Array.isArray(v)).map((v) => JSON.stringify(v)))
      .map((b) => ({ category: 'not an object', body: b, want: 400 })),
    fc.tuple(obj, fc.nat()).map(([b, n]) => ({ category: 'truncated JSON', body: b.slice(0, Math.max(1, n % b.length)), want: 400 })),
    fc.tuple(obj, fc.constantFrom('text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data; boundary=x', 'text/csv', 'application/xml', null))
      .map(([b, type]) => ({ category: 'wrong content type', body: b, type, want: 415 })),
    fc.tuple(obj, fc.constantFrom('gzip', 'deflate', 'br')).map(([b, encoding]) => ({ category: 'compressed', body: gzipSync(b), encoding, want: 415 })),
    fc.tuple(fc.constantFrom(...names, 'x'), hostileValue, fc.constantFrom(...FOREIGN_KEYS)).map(([k, v, f]) => ({ category: 'duplicate keys', body: `{${JSON.stringify(k)}:1,${JSON.stringify(k)}:${toJsonText(v) ?? 'null'},${JSON.stringify(f)}:0}`, want: 400 })),
    fc.tuple(fc.constantFrom(...names, 'x'), fc.constantFrom(...SQL_TEXTS, ...UNICODE_TEXTS, ...NUMBER_TEXTS)).map(([k, v]) => ({ category: 'sql, unicode and number strings', body: `{${JSON.stringify(k)}:${JSON.stringify(v)},"\\u0000":1}`, want: 400 })),
  ]
  // no body at all means {} to a route whose fields are all optional, which may be a valid request
  if (needsSome) choices.push(fc.constantFrom('', ' ', '{}').map((b) => ({ category: 'empty body', body: b, want: 400 })))
  return fc.oneof(...choices)
}

function request(method: string, path: string, cookie: string | undefined, b: Body): RawRequest {
  const headers: Record<string, string> = {}
  if (cookie) headers.cookie = cookie
  if (b.type !== null) headers['content-type'] = b.type ?? 'application/json'
  if (b.encoding) headers['content-encoding'] = b.encoding
  return { method, path, headers, body: b.body }
}

describe('hostile bodies to the session routes', () => {
  let db: Knex
  let before: TableState
  let rssBefore = 0
  let watcher: { stop: () => number }
  const targets: { method: string; route: string; path: string; cookie?: string; body: Kind }[] = []

  beforeAll(async () => {
    db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
    for (const [role, email] of Object.entries(ROLE_ACCOUNTS)) cookies[role] = await signIn(email)
    for (const w of WRITES) {
      const caller = callerFor(w.method, w.route)
      targets.push({ method: w.method, route: w.route, path: await concretePath(db, w.route), cookie: caller ? cookies[caller] : undefined, body: w.body })
    }
    before = await settledTableStates(db)
    rssBefore = serverRss()
    watcher = watchRss()
  })

  afterAll(async () => {
    await db?.destroy()
  })

  it('every write route is known by how it reads its body, and every JSON schema refuses foreign keys', () => {
    expect(WRITES.length).toBeGreaterThan(40)
    const open = WRITES.filter((w) => w.body.kind === 'json' && !closed((w.body as { schema: any }).schema)).map((w) => `${w.method} ${w.route}`)
    expect(open).toEqual([])
  })

  it('JSON bodies that are invalid by construction are refused with problem+json on every route', async () => {
    for (const t of targets.filter((x) => x.body.kind === 'json')) {
      const { names, needsSome } = shapeOf((t.body as { schema: any }).schema)
      const group = fc.array(bodiesFor(names.length ? names : ['x'], needsSome), { minLength: WIDTH, maxLength: WIDTH })
      await fc.assert(fc.asyncProperty(group, async (bodies) => {
        const n = faults.length
        await inParallel(bodies, WIDTH, (b) => checkRefused(b.category, request(t.method, t.path, t.cookie, b), b.want))
        // the failing answers are the error fast-check reports with its counterexample
        if (faults.length > n) throw new Error(faults.slice(n, n + 5).join('\n'))
        return true
      }), { numRuns: Math.ceil(PER_ROUTE / WIDTH) })
    }
    expect(faults.slice(0, 20)).toEqual([])
  })

  it('deep nesting, 2 MB strings and bodies past the limit are refused on every JSON route', async () => {
    const deepArray = deepText(10_000, 'array')
    const deepObject = `{"\\u0000":${deepText(10_000, 'object')}}`
    const big = JSON.stringify({ '\u0000': 'S'.repeat(2 * 1024 * 1024) })
    const past = Buffer.alloc(8 * 1024 * 1024 + 1, 0x20)
    for (const t of targets.filter((x) => x.body.kind === 'json')) {
      const names = shapeOf((t.body as { schema: any }).schema).names
      const posts: [string, RawRequest, number][] = [
        ['deep nesting', request(t.method, t.path, t.cookie, { category: '', body: deepArray }), 400],
        ['deep nesting', request(t.method, t.path, t.cookie, { category: '', body: deepObject }), 400],
        ['2 MB strings', request(t.method, t.path, t.cookie, { category: '', body: big }), 400],
        ['2 MB strings', request(t.method, t.path, t.cookie, { category: '', body: `{${JSON.stringify(names[0] ?? 'x')}:${JSON.stringify('S'.repeat(2 * 1024 * 1024))},"\\u0000":1}` }), 400],
        ['past the limit', { ...request(t.method, t.path, t.cookie, { category: '', body: past }), early: true }, 413],
      ]
      await inParallel(posts, 2, ([category, req, want]) => checkRefused(category, req, want))
    }
    expect(faults.slice(0, 20)).toEqual([])
  })

  it('hostile CSV bodies of the limit import are refused on an approved revision', async () => {
    const csvRoutes = targets.filter((x) => x.body.kind === 'csv')
    expect(csvRoutes.length).toBeGreaterThan(0)
    const csv = fc.oneof(
      fc.array(fc.array(fc.oneof(fc.constantFrom(...SQL_TEXTS, ...UNICODE_TEXTS, ...NUMBER_TEXTS, '"', '""', '=cmd|calc', ''), fc.string({ maxLength: 12 })), { maxLength: 8 }), { maxLength: 20 }).map((rows) => rows.map((r) => r.join(',')).join('\n')),
      fc.constantFrom('step,name,lsl,usl\n', '\uFEFF', '\u0000\u0000', 'a'.repeat(10_000), ',,,,\n'.repeat(2000)),
    )
    for (const t of csvRoutes) {
      // the first revision of the demo is approved, so its limits are never replaced: every import is refused
      const group = fc.array(fc.tuple(csv, fc.constantFrom('text/csv', 'text/plain', 'application/json', null), fc.boolean()), { minLength: WIDTH, maxLength: WIDTH })
      await fc.assert(fc.asyncProperty(group, async (items) => {
        const n = faults.length
        await inParallel(items, WIDTH, ([text, type, compressed]) => checkRefused('csv body', {
          method: t.method, path: t.path, body: compressed ? gzipSync(text) : text,
          headers: { cookie: t.cookie!, ...(type ? { 'content-type': type } : {}), ...(compressed ? { 'content-encoding': 'gzip' } : {}) },
        }))
        // the failing answers are the error fast-check reports with its counterexample
        if (faults.length > n) throw new Error(faults.slice(n, n + 5).join('\n'))
        return true
      }), { numRuns: Math.ceil(PER_ROUTE / WIDTH) })
      await checkRefused('past the limit', { method: t.method, path: t.path, body: Buffer.alloc(1_000_001, 0x41), headers: { cookie: t.cookie!, 'content-type': 'text/csv' }, early: true }, 413)
    }
    expect(faults.slice(0, 20)).toEqual([])
  })

  it('the server is up, its memory bounded, and every table as it was', async () => {
    expect(await healthy()).toBe(true)
    const peak = watcher.stop()
    const after = await tableStates(db)
    const bodyless = WRITES.filter((w) => w.body.kind === 'none').map((w) => `${w.method} ${w.route}`)
    console.log(JSON.stringify({ suite: 'hostile-session-bodies', routes: targets.filter((t) => t.body.kind === 'json' || t.body.kind === 'csv').length, bodylessRoutes: bodyless, requests: Object.values(counts).reduce((a, b) => a + b, 0), fiveXx, faults: faults.length, rssBeforeMiB: Math.round(rssBefore / 2 ** 20), rssPeakMiB: Math.round(peak / 2 ** 20), perCategory: counts }))
    expect(fiveXx).toBe(0)
    expect(peak - rssBefore).toBeLessThan(512 * 2 ** 20)
    expect(changedTables(before, after)).toEqual([])
  })
})
