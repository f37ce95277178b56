// Hostile posts to the station routes (POST /api/v1/runs and /api/v1/runs/batch), generated with fast-check.
// Every generated post is invalid by construction (a broken body, type, encoding or size, or a run a rule refuses),
// so the server must refuse each one with problem+json, never answer 5xx, stay up with bounded memory, and leave
// every table of the database as it found it.
import { gzipSync, deflateSync, createGzip, createDeflate } from 'node:zlib'
import { randomUUID } from 'node:crypto'
import fc from 'fast-check'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../fixtures/run-generator'
import { stationTokens } from '../support/stations'
import { answerFault, healthy, inParallel, send, serverRss, watchRss, type RawReply, type RawRequest } from '../support/hostile-http'
import { FOREIGN_KEYS, NUMBER_TEXTS, PROTO_KEYS, RAW_NUMBERS, SQL_TEXTS, UNICODE_TEXTS, deepText, hostileValue, raw, toJsonText } from '../support/hostile-values'
import { changedTables, settledTableStates, tableStates, type TableState } from '../support/table-checksums'

const token = stationTokens()['ATE-T3-01']!
const SINGLE = '/api/v1/runs'
const BATCH = '/api/v1/runs/batch'
const SINGLE_LIMIT = 1024 * 1024
const BATCH_LIMIT = 64 * 1024 * 1024
const WIDTH = 8

type Post = { category: string; req: RawRequest; expect?: 'refused' | 'all-items-refused' }

const counts: Record<string, number> = {}
const faults: string[] = []
let items = 0
let fiveXx = 0

function headers(extra: Record<string, string> = {}): Record<string, string> {
  return { authorization: `Bearer ${token}`, 'content-type': 'application/json', ...extra }
}

/** Sends one post and records what is wrong with its answer (every post here must be refused). */
async function check(p: Post): Promise<void> {
  counts[p.category] = (counts[p.category] ?? 0) + 1
  let r: RawReply
  try { r = await send(p.req) } catch (e) { faults.push(`${p.category}: no answer (${(e as Error).message})`); return }
  if (r.status >= 500) fiveXx += 1
  const fault = answerFault(r)
  if (fault) { faults.push(`${p.category}: ${fault}`); return }
  if (r.status < 400 && p.expect !== 'all-items-refused') { faults.push(`${p.category}: a post made invalid was accepted with ${r.status}: ${r.text.slice(0, 200)}`); return }
  if (r.status < 400) {
    const results = JSON.parse(r.text).results as { status: number }[]
    items += results.length
    const bad = results.filter((x) => x.status < 400 || x.status >= 500)
    if (bad.length) { fiveXx += bad.filter((x) => x.status >= 500).length; faults.push(`${p.category}: batch items answered ${bad.map((x) => x.status).join(',')}`) }
  }
}

/** Checks a whole group concurrently; the property holds when no fault was added. */
async function checkAll(posts: Post[]): Promise<boolean> {
  const before = faults.length
  await inParallel(posts, WIDTH, check)
  // the failing answers are the error fast-check reports with its counterexample
  if (faults.length > before) throw new Error(faults.slice(before, before + 5).join('\n'))
  return true
}

// ---- valid runs to start from (the demo's own generator), each with a fresh serial

const rand = mulberry32(20261202)
const T3 = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
let serialNo = 0
function validRun(lot = 'T3-2611-A'): GeneratedRun {
  serialNo += 1
  return generateRun({ product: T3, lot, serial: `HX-${process.pid}-${serialNo}`, step: 'final', startedAt: new Date(Date.now() - 3_600_000), rand, withTrace: serialNo % 3 === 0 })
}
const BASES = Array.from({ length: 40 }, () => validRun())

/** Every path into the run (objects and arrays), for mutations to pick from. */
function pathsOf(v: unknown, at: (string | number)[] = [], out: (string | number)[][] = []): (string | number)[][] {
  if (at.length) out.push(at)
  if (Array.isArray(v)) v.slice(0, 6).forEach((x, i) => pathsOf(x, [...at, i], out))
  else if (v && typeof v === 'object') for (const k of Object.keys(v)) pathsOf((v as Record<string, unknown>)[k], [...at, k], out)
  return out
}
const BASE_PATHS = BASES.map((b) => pathsOf(b))

type Mutation = { pick: number; action: 'set' | 'delete' | 'wrap' | 'stringify' | 'addKey'; value: unknown; key: string }
const mutationArb: fc.Arbitrary<Mutation> = fc.record({
  pick: fc.nat(),
  action: fc.constantFrom('set', 'set', 'set', 'delete', 'wrap', 'stringify', 'addKey'),
  value: hostileValue,
  key: fc.constantFrom(...FOREIGN_KEYS.filter((k) => k !== '__proto__')),
})

function mutate(run: any, paths: (string | number)[][], m: Mutation): void {
  const path = paths[m.pick % paths.length]!
  let parent = run
  for (const seg of path.slice(0, -1)) { if (parent == null || typeof parent !== 'object') return; parent = parent[seg] }
  if (parent == null || typeof parent !== 'object') return
  const last = path[path.length - 1]!
  if (m.action === 'set') parent[last] = m.value
  else if (m.action === 'delete') { if (Array.isArray(parent)) parent.splice(Number(last), 1); else delete parent[last] }
  else if (m.action === 'wrap') parent[last] = [parent[last]]
  else if (m.action === 'stringify') parent[last] = JSON.stringify(parent[last]) ?? 'undefined'
  else if (m.action === 'addKey' && parent[last] && typeof parent[last] === 'object' && !Array.isArray(parent[last])) parent[last][m.key] = m.value
}

// A breaker makes a run invalid whatever the mutations did before it: the run schema has additionalProperties false,
// requires these fields, and wants a uuid, a serial of [A-Za-z0-9._-]{1,64}, at least one measurement.
const REQUIRED = ['id', 'serial', 'partNumber', 'lot', 'startedAt', 'finishedAt', 'measurements']
const BAD_SERIALS: unknown[] = ['', 'S'.repeat(65), 'a b', "x'--", 'A\u0000B', '\uD800', '\u202E12', 'T3\u200F1', 12345, null, ['T3-1'], { s: 1 }, ...SQL_TEXTS.filter((t) => /[^A-Za-z0-9._-]/.test(t))]
const BAD_DATES: unknown[] = ['', 'yesterday', '2026-13-01T00:00:00Z', '2026-12-02', 1764633600000, null, 'NaN', '2026-12-02T25:00:00Z', '+275760-09-13T00:00:00.001Z']
type Breaker = { kind: 'foreignKey' | 'dropRequired' | 'badId' | 'badSerial' | 'badMeasurements' | 'badDate' | 'badValue'; n: number; value: unknown }
const breakerArb: fc.Arbitrary<Breaker> = fc.record({
  kind: fc.constantFrom('foreignKey', 'dropRequired', 'badId', 'badSerial', 'badMeasurements', 'badDate', 'badValue'),
  n: fc.nat(),
  value: hostileValue,
})

/** Applies the breaker; gives the body text (a foreign key goes in as text so that `__proto__` stays a plain key). */
function broken(run: any, b: Breaker): string {
  switch (b.kind) {
    case 'foreignKey': {
      const key = FOREIGN_KEYS[b.n % FOREIGN_KEYS.length]!
      const text = toJsonText(run)
      return text.startsWith('{') ? `{${JSON.stringify(key)}:${toJsonText(b.value) ?? 'null'}${text.length > 2 ? ',' : ''}${text.slice(1)}` : text
    }
    case 'dropRequired': delete run[REQUIRED[b.n % REQUIRED.length]!]; break
    case 'badId': run.id = [`${randomUUID()}x`, 'not-a-uuid', '', 42, null, "1' OR '1'='1", randomUUID().toUpperCase().replace(/-/g, '')][b.n % 7]; break
    case 'badSerial': run.serial = BAD_SERIALS[b.n % BAD_SERIALS.length]; break
    case 'badMeasurements': run.measurements = [[], {}, 'measurements', null, [null], [{}], [{ name: 'output_power', value: 'NaN', unit: 'dBm' }]][b.n % 7]; break
    case 'badDate': run[b.n % 2 ? 'startedAt' : 'finishedAt'] = BAD_DATES[b.n % BAD_DATES.length]; break
    case 'badValue': {
      // a number spelled as a string is never a number to the schema
      if (!Array.isArray(run.measurements) || run.measurements.length === 0 || typeof run.measurements[0] !== 'object' || run.measurements[0] === null) run.measurements = [{ name: 'output_power', unit: 'dBm' }]
      run.measurements[0].value = NUMBER_TEXTS[b.n % NUMBER_TEXTS.length]
      break
    }
  }
  return toJsonText(run)
}

function clone<T>(v: T): T { return JSON.parse(JSON.stringify(v)) }

const mutatedRunText: fc.Arbitrary<string> = fc.tuple(fc.nat(), fc.array(mutationArb, { maxLength: 4 }), breakerArb).map(([i, ms, b]) => {
  const k = i % BASES.length
  const run = clone(BASES[k]!)
  for (const m of ms) mutate(run, BASE_PATHS[k]!, m)
  return broken(run, b)
})

const single = (category: string, body: string | Buffer, extra: Record<string, string> = {}): Post => ({ category, req: { method: 'POST', path: SINGLE, headers: headers(extra), body } })
const batchOf = (category: string, body: string | Buffer, expectation?: Post['expect']): Post => ({ category, req: { method: 'POST', path: BATCH, headers: headers(), body }, expect: expectation })

// ---- categories

const mutatedSingle = mutatedRunText.map((t) => single('mutated run', t))
const mutatedBatch = fc.array(mutatedRunText, { minLength: 1, maxLength: 12 }).map((ts) => batchOf('mutated batch', `{"runs":[${ts.join(',')}]}`, 'all-items-refused'))

const notARun = fc.oneof(
  fc.constantFrom('null', 'true', '0', '-0', '"run"', '[]', '[{}]', '1e400', 'NaN', 'Infinity', '"\\ud800"'),
  fc.jsonValue({ maxDepth: 3 }).filter((v) => v === null || typeof v !== 'object' || Array.isArray(v)).map((v) => JSON.stringify(v)),
)
// a list of valid runs is still not a run, nor a batch, unless it is wrapped in { "runs": … }
const listOfRuns = fc.array(fc.constantFrom(...BASES.slice(0, 3).map((b) => JSON.stringify(b))), { minLength: 1, maxLength: 3 }).map((ts) => `[${ts.join(',')}]`)
const wrongType = fc.oneof(
  notARun.chain((t) => fc.constantFrom(single('wrong type', t), batchOf('wrong type', t), batchOf('wrong type', `{"runs":${t}}`, 'all-items-refused'))),
  listOfRuns.chain((t) => fc.constantFrom(single('wrong type', t), batchOf('wrong type', t))),
)

const numericSpecial = fc.tuple(fc.nat(), fc.constantFrom(...NUMBER_TEXTS, ...RAW_NUMBERS.map(raw)), fc.constantFrom('value', 'uncertainty', 'offsetHz', 'harmonic'), breakerArb).map(([i, v, field, b]) => {
  const run = clone(BASES[i % BASES.length]!)
  run.measurements[i % run.measurements.length][field] = v
  run.conditions.temperatureC = v
  return single('numeric special', broken(run, b))
})

const unicode = fc.tuple(fc.nat(), fc.constantFrom(...UNICODE_TEXTS, 'S'.repeat(65), 'S'.repeat(5000)), fc.constantFrom('serial', 'lot', 'partNumber', 'operator', 'step'), breakerArb).map(([i, v, field, b]) => {
  const run = clone(BASES[i % BASES.length]!)
  run[field] = v
  run.measurements[0].unit = v
  return single('unicode', broken(run, b))
})

// invalid UTF-8 bytes (an overlong NUL, a lone continuation byte, a surrogate encoded directly) inside a serial
const badBytes = fc.tuple(fc.nat(), fc.constantFrom([0xc0, 0x80], [0x80], [0xed, 0xa0, 0x80], [0xff, 0xfe], [0xf4, 0x90, 0x80, 0x80])).map(([i, bytes]) => {
  const text = JSON.stringify({ ...BASES[i % BASES.length], serial: '@@' })
  const [a, c] = text.split('@@')
  return single('unicode', Buffer.concat([Buffer.from(a!), Buffer.from(bytes), Buffer.from(c!)]))
})

const protoKeys = fc.tuple(fc.nat(), fc.constantFrom(...PROTO_KEYS), fc.constantFrom('top', 'measurement', 'software', 'conditions', 'reference'), hostileValue).map(([i, key, where, v]) => {
  const base = BASES[i % BASES.length]!
  const value = toJsonText(v) ?? 'null'
  const inject = (obj: unknown) => { const t = toJsonText(obj); return `{${JSON.stringify(key)}:${value},${t.slice(1)}` }
  const parts: Record<string, unknown> = { ...base }
  let text: string
  if (where === 'top') text = inject(base)
  else {
    const target = where === 'measurement' ? 'measurements' : where
    const marker = '"@@INNER@@"'
    parts[target] = where === 'measurement' ? ['@@INNER@@', ...base.measurements] : '@@INNER@@'
    const inner = where === 'measurement' ? inject(base.measurements[0]) : inject(base[where] ?? { frequencyHz: 1 })
    text = toJsonText(parts).replace(marker, inner)
  }
  return single('prototype keys', text)
})

const sqlStrings = fc.tuple(fc.nat(), fc.constantFrom(...SQL_TEXTS.filter((t) => /[^A-Za-z0-9._/-]/.test(t))), fc.constantFrom('serial', 'lot', 'id', 'step', 'startedAt')).map(([i, v, field]) => {
  // these fields have patterns or formats no SQL-looking text meets
  const run = { ...clone(BASES[i % BASES.length]!), [field]: v }
  return single('sql-looking strings', toJsonText(run))
})

// duplicate keys: the last occurrence is the one JSON.parse keeps, and it is always the broken one
const duplicateKeys = fc.tuple(fc.nat(), fc.constantFrom(
  '"measurements":[]', '"id":"not-a-uuid"', '"serial":""', '"startedAt":"yesterday"', '"lot":"a b"', '"partNumber":""', '"measurements":"NaN"',
)).map(([i, dup]) => {
  const text = JSON.stringify(BASES[i % BASES.length])
  return single('duplicate keys', `${text.slice(0, -1)},${dup}}`)
})

const truncated = fc.tuple(fc.nat(), fc.nat()).map(([i, cut]) => {
  const text = JSON.stringify(BASES[i % BASES.length])
  return i % 2 ? single('truncated JSON', text.slice(0, cut % text.length)) : batchOf('truncated JSON', `{"runs":[${text}`.slice(0, 10 + (cut % text.length)))
})

// a valid run sent with a type that is not JSON: refused for its type
const contentTypes = fc.tuple(fc.nat(), fc.constantFrom(
  'text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data; boundary=x', 'application/xml', 'text/csv', '', 'application/jsonx', 'json', 'application/octet-stream', '*/*',
)).map(([i, type]) => {
  const h = headers(type ? { 'content-type': type } : {})
  if (!type) delete h['content-type']
  return { category: 'content type', req: { method: 'POST', path: i % 2 ? SINGLE : BATCH, headers: h, body: i % 2 ? JSON.stringify(validRun()) : JSON.stringify({ runs: [validRun()] }) } } as Post
})

const emptyBodies = fc.constantFrom('', ' ', '\n', '\u0000', '\uFEFF').chain((t) => fc.constantFrom(single('empty body', t), batchOf('empty body', t)))

// posts a rule refuses after the schema has passed them (422): each on a lot code never used, so a lot the refusal
// left behind would show in the tables
let lotNo = 0
function freshLot(): string { lotNo += 1; return `HX${process.pid % 10000}-${lotNo}` }
let knownUnit: { serial: string; lot: string } | undefined
const ruleKinds = ['unknownPart', 'impossible', 'infinite', 'finishedBefore', 'future', 'unknownInstrument', 'serialOfOtherLot', 'lotOfOtherPart'] as const
const ruleRefused = fc.tuple(fc.constantFrom(...ruleKinds), fc.constantFrom(...SQL_TEXTS, ...UNICODE_TEXTS.filter((u) => u.length <= 40 && u.length > 0)), fc.boolean()).map(([kind, odd, inBatch]) => {
  const run: any = validRun(freshLot())
  if (kind === 'unknownPart') run.partNumber = odd
  if (kind === 'impossible') run.measurements.find((m: any) => m.name === 'supply_current').value = -78
  if (kind === 'infinite') run.measurements[0].value = raw('1e400')
  if (kind === 'finishedBefore') run.finishedAt = new Date(Date.parse(run.startedAt) - 1000).toISOString()
  if (kind === 'future') { run.startedAt = new Date(Date.now() + 86_400_000).toISOString(); run.finishedAt = new Date(Date.now() + 86_460_000).toISOString() }
  if (kind === 'unknownInstrument') run.instrumentAssets = [`NOPE-${lotNo}`]
  if (kind === 'serialOfOtherLot') run.serial = knownUnit!.serial
  if (kind === 'lotOfOtherPart') run.lot = 'D2-2611-A'
  const text = toJsonText(run)
  return inBatch ? batchOf(`rule refused: ${kind}`, `{"runs":[${text}]}`, 'all-items-refused') : single(`rule refused: ${kind}`, text)
})

const batchEnvelopes = fc.tuple(fc.nat(), hostileValue, fc.constantFrom(...FOREIGN_KEYS)).map(([i, v, key]) => {
  const run = JSON.stringify(BASES[i % BASES.length])
  const shapes = [
    `{"runs":[]}`, `{"runs":${toJsonText(v) ?? 'null'}}`, `{"runs":[${run}],${JSON.stringify(key)}:1}`, `{${JSON.stringify(key)}:1,"runs":[${run}]}`,
    `{"runs":{"0":${run}}}`, `{"run":[${run}]}`, `{"runs":[${run}],"runs":[]}`, `{"runs":[${Array(501).fill('{}').join(',')}]}`,
  ]
  return batchOf('batch envelope', shapes[i % shapes.length]!, i % shapes.length === 1 ? 'all-items-refused' : undefined)
})

describe('hostile station posts', () => {
  let db: Knex
  let before: TableState
  let rssBefore = 0
  let watcher: { stop: () => number }

  beforeAll(async () => {
    db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
    const [[unit]] = await db.raw("SELECT u.serial, l.code AS lot FROM units u JOIN lots l ON l.id = u.lot_id JOIN products p ON p.id = u.product_id WHERE p.part_number = 'VFW-T3-375' LIMIT 1") as [{ serial: string; lot: string }[]]
    knownUnit = unit
    before = await settledTableStates(db)
    rssBefore = serverRss()
    watcher = watchRss()
  })

  afterAll(async () => {
    await db?.destroy()
  })

  const property = (name: string, arb: fc.Arbitrary<Post>, posts: number) => it(name, async () => {
    const group = fc.array(arb, { minLength: WIDTH, maxLength: WIDTH })
    const start = faults.length
    await fc.assert(fc.asyncProperty(group, checkAll), { numRuns: Math.ceil(posts / WIDTH) })
    expect(faults.slice(start, start + 20)).toEqual([])
  })

  property('mutated valid runs are refused one by one', mutatedSingle, 3200)
  property('batches of mutated runs refuse every run', mutatedBatch, 400)
  property('bodies of the wrong type are refused', wrongType, 700)
  property('NaN, Infinity and -Infinity as strings, 1e308, -0 and 1e400 are refused with the rest of a broken run', numericSpecial, 700)
  property('lone surrogates, NUL, right-to-left marks, overlong serials and invalid UTF-8 are refused', fc.oneof(unicode, badBytes), 800)
  property('__proto__, constructor and prototype keys are refused as unknown properties', protoKeys, 700)
  property('SQL-looking strings are refused by pattern and format', sqlStrings, 700)
  property('duplicate keys are read as their last occurrence', duplicateKeys, 500)
  property('truncated JSON is a 400', truncated, 500)
  property('a body declared as anything but JSON is refused for its type', contentTypes, 400)
  property('empty bodies are refused', emptyBodies, 200)
  property('runs a rule refuses are answered 422 and leave nothing behind', ruleRefused, 600)
  property('hostile batch envelopes are refused', batchEnvelopes, 400)

  it('nesting 10,000 levels deep is refused', async () => {
    const start = faults.length
    const posts: Post[] = []
    for (const kind of ['array', 'object'] as const) {
      const deep = deepText(10_000, kind)
      const run = JSON.stringify({ ...BASES[0], serial: '@@' }).replace('"@@"', deep)
      const meas = JSON.stringify({ ...BASES[1], measurements: '@@' }).replace('"@@"', deep)
      for (let i = 0; i < 10; i++) {
        posts.push(single('deep nesting', deep), single('deep nesting', run), single('deep nesting', meas), batchOf('deep nesting', `{"runs":${deep}}`, 'all-items-refused'), batchOf('deep nesting', `{"runs":[${run}]}`, 'all-items-refused'))
      }
    }
    await checkAll(posts)
    expect(faults.slice(start, start + 20)).toEqual([])
  })

  it('2 MB strings are refused: past the limit of one run, by the schema inside a batch', async () => {
    const start = faults.length
    const big = 'S'.repeat(2 * 1024 * 1024)
    const posts: Post[] = []
    for (let i = 0; i < 30; i++) {
      const run = { ...BASES[i % BASES.length], serial: big }
      posts.push({ ...single('2 MB strings', JSON.stringify(run)), req: { ...single('', JSON.stringify(run)).req, early: true } }, batchOf('2 MB strings', JSON.stringify({ runs: [run] }), 'all-items-refused'))
      posts.push(batchOf('2 MB strings', JSON.stringify({ runs: [{ ...BASES[0], operator: big }] }), 'all-items-refused'))
      posts.push(batchOf('2 MB strings', `{"runs":[${JSON.stringify(BASES[0])}],${JSON.stringify(big)}:1}`))
    }
    await checkAll(posts)
    expect(faults.slice(start, start + 20)).toEqual([])
  })

  it('bodies past the limit are refused with 413, declared or streamed', async () => {
    const start = faults.length
    const overSingle = Buffer.alloc(SINGLE_LIMIT + 1, 0x20)
    const posts: Post[] = []
    for (let i = 0; i < 20; i++) {
      posts.push({ category: 'past the limit', req: { ...single('', overSingle).req, early: true } })
      // no declared length: the body arrives chunked and must still be cut off at the limit
      posts.push({ category: 'past the limit', req: { method: 'POST', path: SINGLE, headers: headers({ 'transfer-encoding': 'chunked' }), body: overSingle } })
    }
    const overBatch = Buffer.alloc(BATCH_LIMIT + 1024, 0x20)
    for (let i = 0; i < 2; i++) {
      posts.push({ category: 'past the limit', req: { ...batchOf('', overBatch).req, early: true } })
      posts.push({ category: 'past the limit', req: { method: 'POST', path: BATCH, headers: headers({ 'transfer-encoding': 'chunked' }), body: overBatch } })
    }
    for (const p of posts) {
      counts[p.category] = (counts[p.category] ?? 0) + 1
      let r: RawReply
      try { r = await send(p.req) } catch (e) { faults.push(`${p.category}: no answer (${(e as Error).message})`); continue }
      if (r.status >= 500) fiveXx += 1
      const fault = answerFault(r) ?? (r.status === 413 ? undefined : `answered ${r.status}, not 413`)
      if (fault) faults.push(`${p.category}: ${fault}`)
    }
    expect(faults.slice(start, start + 20)).toEqual([])
  })

  it('gzip and deflate bodies, bombs among them, are refused with problem+json', async () => {
    const start = faults.length
    const posts: Post[] = []
    for (let i = 0; i < 100; i++) {
      const run = JSON.stringify(validRun())
      posts.push(single('compressed', gzipSync(run), { 'content-encoding': 'gzip' }))
      posts.push(single('compressed', deflateSync(run), { 'content-encoding': 'deflate' }))
    }
    // 256 MiB of zeros squeezed to a few hundred KiB: a server that inflated it whole would blow its memory
    const bomb = async (stream: ReturnType<typeof createGzip>) => {
      const out: Buffer[] = []
      stream.on('data', (c: Buffer) => out.push(c))
      const done = new Promise((r) => stream.on('end', r))
      const zeros = Buffer.alloc(1024 * 1024)
      for (let i = 0; i < 256; i++) if (!stream.write(zeros)) await new Promise((r) => stream.once('drain', r))
      stream.end()
      await done
      return Buffer.concat(out)
    }
    const gz = await bomb(createGzip({ level: 9 }))
    const df = await bomb(createDeflate({ level: 9 }))
    for (let i = 0; i < 5; i++) {
      posts.push(single('compression bomb', gz, { 'content-encoding': 'gzip' }), single('compression bomb', df, { 'content-encoding': 'deflate' }))
      posts.push(batchOf('compression bomb', gz), { category: 'compression bomb', req: { method: 'POST', path: BATCH, headers: headers({ 'content-encoding': 'gzip' }), body: gz } })
    }
    await checkAll(posts)
    expect(faults.slice(start, start + 20)).toEqual([])
  })

  it('the server is still up, its memory bounded, and every table as it was', async () => {
    expect(await healthy()).toBe(true)
    const peak = watcher.stop()
    const after = await tableStates(db)
    const total = Object.values(counts).reduce((a, b) => a + b, 0)
    console.log(JSON.stringify({ suite: 'hostile-station-posts', posts: total, batchItems: items, fiveXx, faults: faults.length, rssBeforeMiB: Math.round(rssBefore / 2 ** 20), rssPeakMiB: Math.round(peak / 2 ** 20), perCategory: counts }))
    expect(total).toBeGreaterThanOrEqual(10_000)
    expect(fiveXx).toBe(0)
    // the largest body read whole is the batch limit (64 MiB); a few of them in flight and their parse fit in 512 MiB
    expect(peak - rssBefore).toBeLessThan(512 * 2 ** 20)
    expect(changedTables(before, after)).toEqual([])
  })
})
