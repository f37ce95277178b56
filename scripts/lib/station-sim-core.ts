// Pure parts of the station simulator: arguments, the loopback rule, retry delays and the summary.

export type SimArgs = {
  url: string; token: string; part: string; lot: string; units: number
  drift: boolean; seed: number; batch: number
}

export class UsageError extends Error {}

export const USAGE = 'usage: npm run station:sim -- --url http://127.0.0.1:3000 --token tst_… --part VFW-T3-375 --lot T3-SIM-01 --units 20 [--drift] [--seed 7] [--batch 25]'

const VALUE_FLAGS = new Set(['url', 'token', 'part', 'lot', 'units', 'seed', 'batch'])
const BOOLEAN_FLAGS = new Set(['drift'])

function integer(name: string, raw: string, min: number, max: number): number {
  if (!/^-?\d+$/.test(raw)) throw new UsageError(`--${name} must be a whole number, got "${raw}"`)
  const n = Number(raw)
  if (n < min || n > max) throw new UsageError(`--${name} must be between ${min} and ${max}, got ${n}`)
  return n
}

/** Parses `--key value`, `--key=value` and `--drift`; anything else is a usage error. */
export function parseSimArgs(argv: string[], defaultSeed = 1): SimArgs {
  const got: Record<string, string> = {}
  let drift = false
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!
    const m = a.match(/^--([a-z]+)(?:=(.*))?$/)
    if (!m) throw new UsageError(`unexpected argument "${a}"`)
    const [, key, inline] = m as unknown as [string, string, string | undefined]
    if (BOOLEAN_FLAGS.has(key)) {
      if (inline !== undefined) throw new UsageError(`--${key} takes no value`)
      drift = true
      continue
    }
    if (!VALUE_FLAGS.has(key)) throw new UsageError(`unknown option --${key}`)
    const value = inline ?? argv[++i]
    if (value === undefined || (inline === undefined && value.startsWith('--'))) throw new UsageError(`--${key} needs a value`)
    if (key in got) throw new UsageError(`--${key} is given twice`)
    got[key] = value
  }
  for (const k of ['url', 'token', 'part', 'lot', 'units']) if (!got[k]) throw new UsageError(`--${k} is required`)
  if (!/^[A-Za-z0-9._/-]{1,32}$/.test(got.lot!)) throw new UsageError('--lot must be 1 to 32 letters, digits or . _ / -')
  return {
    url: got.url!, token: got.token!, part: got.part!, lot: got.lot!,
    units: integer('units', got.units!, 1, 10_000), drift,
    seed: got.seed !== undefined ? integer('seed', got.seed, 0, 2 ** 32 - 1) : defaultSeed,
    batch: got.batch !== undefined ? integer('batch', got.batch, 1, 500) : 1,
  }
}

const LOOPBACK = new Set(['127.0.0.1', 'localhost', '[::1]'])

/** The base URL without a trailing slash, if its host is this machine's loopback; otherwise throws. */
export function loopbackBase(raw: string): string {
  let u: URL
  try { u = new URL(raw) } catch { throw new UsageError(`--url "${raw}" is not a URL`) }
  if (u.protocol !== 'http:' && u.protocol !== 'https:') throw new UsageError(`--url must be http or https, got ${u.protocol}`)
  if (!LOOPBACK.has(u.hostname.toLowerCase())) {
    throw new UsageError(`refusing to post to ${u.hostname}: the simulator only talks to a Tercet on this machine (127.0.0.1, localhost or ::1)`)
  }
  return u.origin + u.pathname.replace(/\/+$/, '')
}

export type Backoff = { baseMs: number; capMs: number; attempts: number }
export const DEFAULT_BACKOFF: Backoff = { baseMs: 500, capMs: 8000, attempts: 6 }

/**
 * Wait before retry number `retry` (1-based): base·2^(retry−1), at least what Retry-After asks,
 * never above the cap. Undefined once the attempts are used up.
 */
export function retryDelay(retry: number, b: Backoff = DEFAULT_BACKOFF, retryAfterS?: number): number | undefined {
  if (retry < 1 || retry >= b.attempts) return undefined
  const exp = b.baseMs * 2 ** (retry - 1)
  const asked = retryAfterS !== undefined && Number.isFinite(retryAfterS) && retryAfterS > 0 ? retryAfterS * 1000 : 0
  return Math.min(b.capMs, Math.max(exp, asked))
}

export type Tally = { posted: number; created: number; replayed: number; retests: number; failures: Map<string, number> }

export function newTally(): Tally {
  return { posted: 0, created: 0, replayed: 0, retests: 0, failures: new Map() }
}

export function record(t: Tally, outcome: number | 'network'): void {
  if (outcome === 201) t.created++
  else if (outcome === 200) t.replayed++
  else t.failures.set(String(outcome), (t.failures.get(String(outcome)) ?? 0) + 1)
}

export function summaryLine(t: Tally): string {
  const f = [...t.failures].sort(([a], [b]) => a.localeCompare(b)).map(([k, n]) => `${k}×${n}`).join(', ')
  return `station-sim: posted ${t.posted} runs · 201 stored ${t.created} · 200 replayed ${t.replayed} · retests ${t.retests} · failures ${f || 'none'}`
}

export type SpecLimit = { step: string; name: string; offsetHz?: number; harmonic?: number; lsl: number | null; usl: number | null }

/** The station sequencer's own verdict: plain acceptance against the limits it downloaded. */
export function stationVerdict(limits: SpecLimit[], run: { step: string; measurements: { name: string; value: number; offsetHz?: number; harmonic?: number }[] }): 'pass' | 'fail' {
  for (const m of run.measurements) {
    const q = m.offsetHz ?? m.harmonic ?? 0
    const l = limits.find((x) => x.step === run.step && x.name === m.name && (x.offsetHz ?? x.harmonic ?? 0) === q)
    if (l && ((l.lsl != null && m.value < l.lsl) || (l.usl != null && m.value > l.usl))) return 'fail'
  }
  return 'pass'
}
