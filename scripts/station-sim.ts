// A pretend test station: posts realistic runs of every step of a part for N units into one lot.
import { DEMO_PRODUCTS } from '../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../fixtures/run-generator'
import {
  DEFAULT_BACKOFF, USAGE, UsageError, loopbackBase, newTally, parseSimArgs, record, retryDelay, summaryLine, type Tally,
} from './lib/station-sim-core'

type SpecLimit = { step: string; name: string; offsetHz?: number; harmonic?: number; lsl: number | null; usl: number | null }
type Reply = { status: number | 'network'; body: any; retryAfter?: number }

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

async function once(base: string, token: string, method: string, path: string, body?: unknown): Promise<Reply> {
  try {
    const r = await fetch(base + path, {
      method,
      headers: { authorization: `Bearer ${token}`, accept: 'application/json', ...(body ? { 'content-type': 'application/json' } : {}) },
      body: body ? JSON.stringify(body) : undefined,
      signal: AbortSignal.timeout(30_000),
    })
    const text = await r.text()
    let parsed: any = null
    try { parsed = text ? JSON.parse(text) : null } catch { parsed = text }
    const ra = Number(r.headers.get('retry-after'))
    return { status: r.status, body: parsed, retryAfter: Number.isFinite(ra) ? ra : undefined }
  } catch {
    return { status: 'network', body: null }
  }
}

/** The same body again after a 503 or a network failure, so the server sees one run whatever happened. */
async function withRetry(base: string, token: string, method: string, path: string, body?: unknown): Promise<Reply> {
  for (let retry = 1; ; retry++) {
    const r = await once(base, token, method, path, body)
    if (r.status !== 503 && r.status !== 'network') return r
    const wait = retryDelay(retry, DEFAULT_BACKOFF, r.retryAfter)
    if (wait === undefined) return r
    await sleep(wait)
  }
}

/** The station sequencer's own verdict: plain acceptance against the limits it downloaded. */
function stationVerdict(limits: SpecLimit[], run: GeneratedRun): 'pass' | 'fail' {
  for (const m of run.measurements) {
    const q = m.offsetHz ?? m.harmonic ?? 0
    const l = limits.find((x) => x.step === run.step && x.name === m.name && (x.offsetHz ?? x.harmonic ?? 0) === q)
    if (l && ((l.lsl != null && m.value < l.lsl) || (l.usl != null && m.value > l.usl))) return 'fail'
  }
  return 'pass'
}

async function main() {
  const args = parseSimArgs(process.argv.slice(2), Date.now() >>> 0)
  const base = loopbackBase(args.url)

  const products = await withRetry(base, args.token, 'GET', '/api/products')
  if (products.status !== 200) throw new Error(`GET /api/products answered ${products.status}: ${products.body?.detail ?? ''}`)
  const product = products.body.products.find((p: any) => p.partNumber === args.part)
  if (!product) throw new UsageError(`the server has no part ${args.part} (it has ${products.body.products.map((p: any) => p.partNumber).join(', ')})`)
  const model = DEMO_PRODUCTS.find((p) => p.partNumber === args.part)
  if (!model) throw new UsageError(`no simulation model for ${args.part}; the simulator knows ${DEMO_PRODUCTS.map((p) => p.partNumber).join(', ')}`)
  const spec = await withRetry(base, args.token, 'GET', `/api/products/${encodeURIComponent(args.part)}/spec`)
  const limits: SpecLimit[] = spec.status === 200 ? spec.body.limits : []

  const steps: string[] = product.steps
  const finalStep = steps[steps.length - 1]!
  const rand = mulberry32(args.seed)
  const tag = args.lot.replace(/[^A-Za-z0-9._-]/g, '')
  const tally: Tally = newTally()

  // a simulated shift clock: runs follow each other two minutes apart, ending a few minutes ago,
  // so no finishedAt is ever ahead of the server's clock
  const SPACING = 120_000
  let clock = Date.now() - Math.min(7 * 86_400_000, args.units * (steps.length + 0.2) * SPACING) - 5 * 60_000
  const make = (serial: string, step: string, u: number, failRate?: number) => {
    const startedAt = new Date(Math.min(clock, Date.now() - 5 * 60_000))
    clock += SPACING
    const run = generateRun({
      product: model, lot: args.lot, serial, step, startedAt, rand,
      progress: u / args.units, drift: args.drift, failRate, withTrace: step === finalStep,
    })
    run.stationVerdict = stationVerdict(limits, run)
    return run
  }

  // runs waiting to be posted; a failing first final brings its retest into the queue
  type Item = { run: GeneratedRun; u: number; retest: boolean; tries: number }
  const queue: Item[] = []
  const settle = (item: Item, status: number | 'network', run: any) => {
    tally.posted++
    record(tally, status)
    if (status === 201 && item.run.step === finalStep && !item.retest && run?.verdict === 'fail') {
      tally.retests++
      queue.push({ run: make(item.run.serial, finalStep, item.u, 0), u: item.u, retest: true, tries: 0 })
    }
  }

  for (let u = 0; u < args.units; u++) {
    const serial = `${tag}-${String(u + 1).padStart(4, '0')}`
    for (const step of steps) queue.push({ run: make(serial, step, u), u, retest: false, tries: 0 })
    while (queue.length >= args.batch || (u === args.units - 1 && queue.length)) {
      const chunk = queue.splice(0, args.batch)
      if (args.batch === 1) {
        const r = await withRetry(base, args.token, 'POST', '/api/v1/runs', chunk[0]!.run)
        settle(chunk[0]!, r.status, r.body)
        continue
      }
      const r = await withRetry(base, args.token, 'POST', '/api/v1/runs/batch', { runs: chunk.map((c) => c.run) })
      if (r.status !== 200) { for (const c of chunk) settle(c, r.status, null); continue }
      const retry: Item[] = []
      let wait = 0
      r.body.results.forEach((res: any, i: number) => {
        const item = chunk[i]!
        const delay = res.status === 503 ? retryDelay(++item.tries, DEFAULT_BACKOFF) : undefined
        if (delay === undefined) settle(item, res.status, res.run)
        else { retry.push(item); wait = Math.max(wait, delay) }
      })
      // runs the database could not take go back to the front of the queue, under the same ids
      if (retry.length) {
        await sleep(wait)
        queue.unshift(...retry)
      }
    }
  }
  process.stdout.write(summaryLine(tally) + '\n')
  process.exitCode = tally.failures.size ? 1 : 0
}

main().catch((e) => {
  if (e instanceof UsageError) process.stderr.write(`station-sim: ${e.message}\n${USAGE}\n`)
  else process.stderr.write(`station-sim: ${e?.message ?? e}\n`)
  process.exit(2)
})
