// Hostile query strings on every GET route under server/api (from the tree, with real ids in the path), generated
// with fast-check: arrays, repeated keys, huge and negative numbers, NaN, unicode, bad percent escapes, 10 KB values
// and SQL-looking text. No answer may be a 5xx, and every refusal is problem+json.
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join, resolve } from 'node:path'
import fc from 'fast-check'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { ROLE_ACCOUNTS, signIn } from '../support/http'
import { answerFault, healthy, inParallel, send, type RawReply } from '../support/hostile-http'
import { SQL_TEXTS } from '../support/hostile-values'
import { apiRouteFiles } from '../support/route-files'
import { callerFor, concretePath } from '../support/route-ids'

const PER_ROUTE = Number(process.env.TERCET_HOSTILE_QUERIES_PER_ROUTE ?? 48)
// documents built per request (PDFs, zip files of them) take seconds each on this machine: fewer of those
const HEAVY = /\.(pdf|zip)$/
const WIDTH = 4

/** Every query parameter name the routes and their parsers read, gathered from the source. */
function queryNames(): string[] {
  const names = new Set(['page', 'pageSize', 'from', 'to', 'preview', 'offset', 'limit', 'days', 'since', 'bins', 'target'])
  const read = (dir: string) => {
    for (const n of readdirSync(dir)) {
      const p = join(dir, n)
      if (statSync(p).isDirectory()) { read(p); continue }
      const text = readFileSync(p, 'utf8')
      for (const m of text.matchAll(/\b(?:q|query|raw)\.([a-zA-Z]+)\b|(?:Param|firstValue|Value)\((?:raw|q|query), '([a-zA-Z]+)'/g)) names.add(m[1] ?? m[2]!)
    }
  }
  read(resolve(process.cwd(), 'server/api'))
  read(resolve(process.cwd(), 'server/utils'))
  for (const n of ['toString', 'toLowerCase', 'length']) names.delete(n)
  return [...names].sort()
}

const NAMES = queryNames()
const enc = encodeURIComponent

const hostileText: fc.Arbitrary<string> = fc.oneof(
  fc.constantFrom('-1', '0', '-0', 'NaN', 'Infinity', '-Infinity', '1e308', '1e400', '99999999999999999999', '4294967296', '2.5', '0x10', ' 1', '', 'null', 'undefined', 'true', '[]', '{}').map(enc),
  fc.constantFrom(...SQL_TEXTS).map(enc),
  // raw escapes: a lone surrogate's bytes, NUL, a right-to-left override, broken escapes, plus signs
  fc.constantFrom('%ED%A0%80', '%00', '%E2%80%AE', '%zz', '%', '%C0%80', '%FF', '+', '%2B%2F', '..%2F..%2F', '%0D%0ASet-Cookie:x=1'),
  fc.string({ unit: 'binary', maxLength: 16 }).map(enc),
  fc.constantFrom(10 * 1024).map((n) => 'Q'.repeat(n)),
  fc.date({ noInvalidDate: false }).map((d) => enc(Number.isNaN(d.getTime()) ? 'Invalid Date' : d.toISOString())),
)

const pair: fc.Arbitrary<string> = fc.tuple(fc.constantFrom(...NAMES, '__proto__', 'constructor', 'prototype'), hostileText, fc.constantFrom('plain', 'array', 'repeat', 'indexed', 'nested'))
  .map(([k, v, shape]) => {
    if (shape === 'array') return `${k}[]=${v}&${k}[]=2`
    if (shape === 'repeat') return `${k}=${v}&${k}=1&${k}=`
    if (shape === 'indexed') return `${k}[0]=${v}&${k}[1]=2`
    if (shape === 'nested') return `${k}[__proto__][x]=${v}`
    return `${k}=${v}`
  })

// the request line must fit Node's 16 KiB header limit (past it Node answers 431 itself, before any route runs),
// so a query keeps its pairs up to 12,000 characters: one 10 KB value at most
const queryString = fc.array(pair, { minLength: 1, maxLength: 6 }).map((ps) => {
  const kept: string[] = []
  let length = 0
  for (const p of ps) { if (kept.length && length + p.length > 12_000) continue; kept.push(p); length += p.length + 1 }
  return kept.join('&')
})

describe('hostile query strings on GET routes', () => {
  let db: Knex
  const counts: Record<string, number> = {}
  const faults: string[] = []
  let fiveXx = 0
  const targets: { route: string; path: string; cookie?: string }[] = []

  beforeAll(async () => {
    db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
    const cookies: Record<string, string> = {}
    for (const [role, email] of Object.entries(ROLE_ACCOUNTS)) cookies[role] = await signIn(email)
    for (const r of apiRouteFiles().filter((x) => x.method === 'GET')) {
      const caller = callerFor('GET', r.route)
      targets.push({ route: r.route, path: await concretePath(db, r.route), cookie: caller && caller !== 'station' ? cookies[caller] : undefined })
    }
  })

  afterAll(async () => {
    await db?.destroy()
  })

  it('every GET route answers hostile query strings without a 5xx, refusing with problem+json', async () => {
    expect(targets.length).toBeGreaterThan(40)
    for (const t of targets) {
      const runs = HEAVY.test(t.route) ? 4 : Math.ceil(PER_ROUTE / WIDTH)
      await fc.assert(fc.asyncProperty(fc.array(queryString, { minLength: WIDTH, maxLength: WIDTH }), async (qs) => {
        const n = faults.length
        await inParallel(qs, WIDTH, async (q) => {
          counts[t.route] = (counts[t.route] ?? 0) + 1
          let r: RawReply
          try { r = await send({ method: 'GET', path: `${t.path}?${q}`, headers: t.cookie ? { cookie: t.cookie } : {} }) } catch (e) { faults.push(`GET ${t.path}?${q.slice(0, 200)}: no answer (${(e as Error).message})`); return }
          if (r.status >= 500) fiveXx += 1
          const fault = answerFault(r)
          if (fault) faults.push(`GET ${t.path}?${q.slice(0, 200)}: ${fault}`)
        })
        // the failing answers are the error fast-check reports with its counterexample
        if (faults.length > n) throw new Error(faults.slice(n, n + 5).join('\n'))
        return true
      }), { numRuns: runs })
    }
    expect(await healthy()).toBe(true)
    console.log(JSON.stringify({ suite: 'hostile-query-strings', routes: targets.length, queries: Object.values(counts).reduce((a, b) => a + b, 0), fiveXx, faults: faults.length, queryNames: NAMES.length }))
    expect(fiveXx).toBe(0)
    expect(faults.slice(0, 20)).toEqual([])
  })
})
