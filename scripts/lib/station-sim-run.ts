// The station simulator's loop, for the command (scripts/station-sim.ts) and for tests that run several stations at
// once against a server they disturb: it posts every step of a part for N units into one lot, retries a 503 or a
// network failure with the same body (the run id is the idempotency key) and reports what the server said.
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../fixtures/run-generator'
import {
  DEFAULT_BACKOFF, UsageError, loopbackBase, newTally, record, retryDelay, stationVerdict, type Backoff, type SimArgs, type SpecLimit, type Tally,
} from './station-sim-core'

type Reply = { status: number | 'network'; body: any; retryAfter?: number; ms: number }

export type SimOptions = {
  backoff?: Backoff
  /** every answer of every attempt, with how long it took: `http` for a response, `run` for each run of a batch */
  onReply?: (status: number | 'network', ms: number, kind: 'http' | 'run') => void
  /** the id of each run the server said it holds (201 stored, 200 replayed) */
  onStored?: (id: string, run: GeneratedRun) => void
  /** how long to wait between posts (a steady load rather than as fast as it can) */
  pauseMs?: number
  timeoutMs?: number
  /** asked before each new unit: true ends the run early, once the runs already made are posted */
  shouldStop?: () => boolean
  /** the ids of each batch as it is sent */
  onBatch?: (ids: string[]) => void
}

export type SimResult = { tally: Tally; stored: Set<string>; measurements: Map<string, number> }

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

async function once(base: string, token: string, method: string, path: string, body: unknown, timeoutMs: number): Promise<Reply> {
  const t0 = performance.now()
  try {
    const r = await fetch(base + path, {
      method,
      headers: { authorization: `Bearer ${token}`, accept: 'application/json', ...(body ? { 'content-type': 'application/json' } : {}) },
      body: body ? JSON.stringify(body) : undefined,
      signal: AbortSignal.timeout(timeoutMs),
    })
    const text = await r.text()
    let parsed: any = null
    try { parsed = text ? JSON.parse(text) : null } catch { parsed = text }
    const ra = Number(r.headers.get('retry-after'))
    return { status: r.status, body: parsed, retryAfter: Number.isFinite(ra) ? ra : undefined, ms: performance.now() - t0 }
  } catch {
    return { status: 'network', body: null, ms: performance.now() - t0 }
  }
}

export async function simulateStation(args: SimArgs, opts: SimOptions = {}): Promise<SimResult> {
  const base = loopbackBase(args.url)
  const backoff = opts.backoff ?? DEFAULT_BACKOFF
  const timeoutMs = opts.timeoutMs ?? 30_000
  const stored = new Set<string>()
  const measurements = new Map<string, number>()

  /** The same body again after a 503 or a network failure, so the server sees one run whatever happened. */
  const withRetry = async (method: string, path: string, body?: unknown): Promise<Reply> => {
    for (let retry = 1; ; retry++) {
      const r = await once(base, args.token, method, path, body, timeoutMs)
      opts.onReply?.(r.status, r.ms, 'http')
      if (r.status !== 503 && r.status !== 'network') return r
      const wait = retryDelay(retry, backoff, r.retryAfter)
      if (wait === undefined) return r
      await sleep(wait)
    }
  }

  const products = await withRetry('GET', '/api/products')
  if (products.status !== 200) throw new Error(`GET /api/products answered ${products.status}: ${products.body?.detail ?? ''}`)
  const product = products.body.products.find((p: any) => p.partNumber === args.part)
  if (!product) throw new UsageError(`the server has no part ${args.part} (it has ${products.body.products.map((p: any) => p.partNumber).join(', ')})`)
  const model = DEMO_PRODUCTS.find((p) => p.partNumber === args.part)
  if (!model) throw new UsageError(`no simulation model for ${args.part}; the simulator knows ${DEMO_PRODUCTS.map((p) => p.partNumber).join(', ')}`)
  const spec = await withRetry('GET', `/api/products/${encodeURIComponent(args.part)}/spec`)
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
    if (status === 201 || status === 200) { stored.add(item.run.id); measurements.set(item.run.id, item.run.measurements.length); opts.onStored?.(item.run.id, item.run) }
    if (status === 201 && item.run.step === finalStep && !item.retest && run?.verdict === 'fail') {
      tally.retests++
      queue.push({ run: make(item.run.serial, finalStep, item.u, 0), u: item.u, retest: true, tries: 0 })
    }
  }

  let last = args.units - 1
  for (let u = 0; u <= last; u++) {
    if (opts.shouldStop?.()) last = u
    const serial = `${tag}-${String(u + 1).padStart(4, '0')}`
    for (const step of steps) queue.push({ run: make(serial, step, u), u, retest: false, tries: 0 })
    while (queue.length >= args.batch || (u === last && queue.length)) {
      if (opts.pauseMs) await sleep(opts.pauseMs)
      const chunk = queue.splice(0, args.batch)
      if (args.batch === 1) {
        const r = await withRetry('POST', '/api/v1/runs', chunk[0]!.run)
        settle(chunk[0]!, r.status, r.body)
        continue
      }
      opts.onBatch?.(chunk.map((c) => c.run.id))
      const r = await withRetry('POST', '/api/v1/runs/batch', { runs: chunk.map((c) => c.run) })
      if (r.status !== 200) { for (const c of chunk) settle(c, r.status, null); continue }
      const retry: Item[] = []
      let wait = 0
      r.body.results.forEach((res: any, i: number) => {
        const item = chunk[i]!
        opts.onReply?.(res.status, r.ms, 'run')
        const delay = res.status === 503 ? retryDelay(++item.tries, backoff) : undefined
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
  return { tally, stored, measurements }
}
