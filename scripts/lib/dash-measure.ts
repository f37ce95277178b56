// Timing of the lot routes for the dashboard bench: each route asked one request after another until it has 20
// samples or has spent 60 s (at least 3 samples, unless one request alone takes 30 s), so that a route that takes
// minutes shows as capped instead of stalling the bench.
import { performance } from 'node:perf_hooks'
import { quantileSorted } from '../../shared/utils/percentiles'

export type RouteFigure = {
  route: string; p50Ms: number | null; p95Ms: number | null; measurements: number; samples: number
  /** stopped by the time cap rather than by the sample count */
  capped?: true
  error?: string
}

export const ROUTE_CAP = { samples: 20, seconds: 60, minSamples: 3, slowSingleSeconds: 30, requestTimeoutSeconds: 180 }

/** One full request: the whole body read; throws on an answer other than 2xx. */
export async function fullRequest(url: string, cookie: string): Promise<void> {
  const r = await fetch(url, { headers: { cookie, accept: 'application/json' }, signal: AbortSignal.timeout(ROUTE_CAP.requestTimeoutSeconds * 1000) })
  const body = await r.arrayBuffer()
  if (!r.ok) throw new Error(`${r.status} ${Buffer.from(body).toString('utf8').slice(0, 300)}`)
}

/** Until the first chunk of the body arrives, then the download is abandoned. */
export async function firstChunk(url: string, cookie: string): Promise<void> {
  const abort = new AbortController()
  const timer = setTimeout(() => abort.abort(), ROUTE_CAP.requestTimeoutSeconds * 1000)
  try {
    const r = await fetch(url, { headers: { cookie }, signal: abort.signal })
    if (!r.ok) throw new Error(`${r.status} ${(await r.text()).slice(0, 300)}`)
    const reader = r.body!.getReader()
    const { done } = await reader.read()
    if (done) throw new Error('the body was empty')
    abort.abort()
    await reader.cancel().catch(() => {})
  } finally {
    clearTimeout(timer)
  }
}

/** Samples one route within the cap; `measurements` is asked after sampling (stations keep adding). */
export async function timeRoute(route: string, once: () => Promise<void>, measurements: () => Promise<number>): Promise<RouteFigure> {
  const times: number[] = []
  const started = performance.now()
  let capped = false
  let error: string | undefined
  // one request first, uncounted, unless it is slow enough to count on its own
  try {
    const t0 = performance.now()
    await once()
    const ms = performance.now() - t0
    if (ms > 5000) times.push(ms)
    if (ms > ROUTE_CAP.slowSingleSeconds * 1000) capped = true
  } catch (e) {
    error = (e as Error).message
  }
  while (!error && !capped && times.length < ROUTE_CAP.samples) {
    const spent = (performance.now() - started) / 1000
    if (spent >= ROUTE_CAP.seconds && times.length >= ROUTE_CAP.minSamples) { capped = true; break }
    const t0 = performance.now()
    try { await once() } catch (e) { error = (e as Error).message; break }
    const ms = performance.now() - t0
    times.push(ms)
    if (ms > ROUTE_CAP.slowSingleSeconds * 1000) capped = true
  }
  times.sort((a, b) => a - b)
  const fig = (p: number) => (times.length ? +quantileSorted(times, p).toFixed(1) : null)
  return {
    route, p50Ms: fig(0.5), p95Ms: fig(0.95), measurements: await measurements(), samples: times.length,
    ...(capped ? { capped: true as const } : {}), ...(error ? { error } : {}),
  }
}
