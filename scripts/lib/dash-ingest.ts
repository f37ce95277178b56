// Stations posting into the bench lot while the dashboard is measured: runs of new units, every step of the part,
// sent open loop at a steady rate (a slow answer does not slow the next post down), each unit's steps spread over the
// bench stations, each station with its own token. Loopback only; stops when asked.
import { performance } from 'node:perf_hooks'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../fixtures/run-generator'
import { stationVerdict, type SpecLimit } from './station-sim-core'

export type IngestReport = { ingestRunsPerSec: number; targetRunsPerSec: number; posted: number; stored: number; failed: Record<string, number>; skipped: number; postP50Ms: number; postP95Ms: number; seconds: number }

/** Runs more than this in flight are not sent (counted as skipped): the load stays bounded if the server stalls. */
const MAX_IN_FLIGHT = 64

export function startStations(o: { url: string; part: string; lot: string; tokens: string[]; runsPerSec: number; limits: SpecLimit[]; seed: number }) {
  const model = DEMO_PRODUCTS.find((p) => p.partNumber === o.part)!
  const rand = mulberry32(o.seed)
  const tag = `BS${Date.now().toString(36).toUpperCase()}`
  const queue: { run: GeneratedRun; token: string }[] = []
  let unit = 0
  const refill = () => {
    unit++
    const serial = `${tag}-${String(unit).padStart(6, '0')}`
    // tested minutes ago, one step after another, so no run finishes ahead of the server's clock
    const now = Date.now()
    model.steps.forEach((step, i) => {
      const run = generateRun({ product: model, lot: o.lot, serial, step, startedAt: new Date(now - (model.steps.length - i) * 180_000), rand, withTrace: step === model.steps[model.steps.length - 1] })
      run.stationVerdict = stationVerdict(o.limits, run)
      queue.push({ run, token: o.tokens[(unit + i) % o.tokens.length]! })
    })
  }
  const took: number[] = []
  const failed: Record<string, number> = {}
  let posted = 0
  let stored = 0
  let skipped = 0
  let inFlight = 0
  const started = performance.now()
  const pending = new Set<Promise<void>>()

  const post = async (item: { run: GeneratedRun; token: string }) => {
    inFlight++
    const t0 = performance.now()
    try {
      const r = await fetch(`${o.url}/api/v1/runs`, {
        method: 'POST', body: JSON.stringify(item.run), signal: AbortSignal.timeout(60_000),
        headers: { 'content-type': 'application/json', authorization: `Bearer ${item.token}` },
      })
      await r.arrayBuffer()
      if (r.status === 201 || r.status === 200) stored++
      else failed[String(r.status)] = (failed[String(r.status)] ?? 0) + 1
    } catch (e) {
      const k = (e as Error).name === 'TimeoutError' ? 'timeout' : 'network'
      failed[k] = (failed[k] ?? 0) + 1
    } finally {
      took.push(performance.now() - t0)
      inFlight--
    }
  }

  const intervalMs = 1000 / o.runsPerSec
  let sent = 0
  // one tick per millisecond budget: sends what the schedule owes, so timer jitter does not lower the rate
  const timer = setInterval(() => {
    const owed = Math.floor((performance.now() - started) / intervalMs) - sent
    for (let i = 0; i < owed; i++) {
      sent++
      if (inFlight >= MAX_IN_FLIGHT) { skipped++; continue }
      if (!queue.length) refill()
      posted++
      const p = post(queue.shift()!)
      pending.add(p)
      void p.finally(() => pending.delete(p))
    }
  }, Math.max(5, Math.floor(intervalMs / 2)))

  return {
    async stop(): Promise<IngestReport> {
      clearInterval(timer)
      const seconds = (performance.now() - started) / 1000
      await Promise.all([...pending])
      took.sort((a, b) => a - b)
      const at = (q: number) => +(took[Math.min(took.length - 1, Math.floor(q * took.length))] ?? Number.NaN).toFixed(1)
      return {
        ingestRunsPerSec: +(stored / seconds).toFixed(1), targetRunsPerSec: o.runsPerSec, posted, stored, failed, skipped,
        postP50Ms: at(0.5), postP95Ms: at(0.95), seconds: +seconds.toFixed(1),
      }
    },
  }
}
