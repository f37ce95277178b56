// Pure parts of the soak test: arguments, percentiles, the per-minute line, the flatness rule and the verdict.
import { linearRegression } from 'simple-statistics'

export class SoakUsageError extends Error {}

export type SoakArgs = { minutes: number; ci: boolean; noBuild: boolean; calibrateSeconds: number; load: number; maxGrowthMb: number }

export const SOAK_USAGE = 'usage: npm run soak -- [--minutes 10] [--ci] [--no-build] [--calibrate-seconds 25 (20 with --ci)] [--load 0.8] [--max-growth-mb 200]'

function num(name: string, raw: string | undefined, min: number, max: number): number {
  if (raw === undefined || raw.startsWith('--')) throw new SoakUsageError(`--${name} needs a value`)
  const n = Number(raw)
  if (!Number.isFinite(n) || raw.trim() === '') throw new SoakUsageError(`--${name} must be a number, got "${raw}"`)
  if (n < min || n > max) throw new SoakUsageError(`--${name} must be between ${min} and ${max}, got ${n}`)
  return n
}

/** `--key value` or `--key=value`; `--ci` and `--no-build` take none. --ci calibrates for 20 s unless told otherwise. */
export function parseSoakArgs(argv: string[]): SoakArgs {
  const out: SoakArgs = { minutes: 10, ci: false, noBuild: false, calibrateSeconds: 25, load: 0.8, maxGrowthMb: 200 }
  const seen = new Set<string>()
  for (let i = 0; i < argv.length; i++) {
    const m = argv[i]!.match(/^--([a-z-]+)(?:=(.*))?$/)
    if (!m) throw new SoakUsageError(`unexpected argument "${argv[i]}"`)
    const key = m[1]!
    if (seen.has(key)) throw new SoakUsageError(`--${key} is given twice`)
    seen.add(key)
    const value = () => m[2] ?? argv[++i]
    switch (key) {
      case 'ci': out.ci = true; break
      case 'no-build': out.noBuild = true; break
      case 'minutes': out.minutes = num(key, value(), 0.5, 24 * 60); break
      case 'calibrate-seconds': out.calibrateSeconds = num(key, value(), 10, 300); break
      case 'load': out.load = num(key, value(), 0.05, 1.5); break
      case 'max-growth-mb': out.maxGrowthMb = num(key, value(), 1, 100_000); break
      default: throw new SoakUsageError(`unknown option --${key}`)
    }
    if ((key === 'ci' || key === 'no-build') && m[2] !== undefined) throw new SoakUsageError(`--${key} takes no value`)
  }
  if (out.ci && !seen.has('calibrate-seconds')) out.calibrateSeconds = 20
  return out
}

/** Nearest-rank percentile (the smallest value with at least p·n values at or below it); NaN for no values. */
export function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return Number.NaN
  const rank = Math.max(1, Math.ceil(p * sorted.length))
  return sorted[Math.min(sorted.length, rank) - 1]!
}

export type MinuteSample = { minute: number; rssMb: number; p50Ms: number; p99Ms: number; runs: number; errors5xx: number; status503: number }

/** Least-squares slope of y over x (per minute); null with fewer than two points or no spread in x. */
export function slope(points: [number, number][]): number | null {
  const ok = points.filter(([x, y]) => Number.isFinite(x) && Number.isFinite(y))
  if (ok.length < 2 || new Set(ok.map(([x]) => x)).size < 2) return null
  return linearRegression(ok).m
}

const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length

export const FLAT_RULE = 'minute 1 is warm-up and left out when at least 3 minutes follow it; of the remaining minutes, the first '
  + 'third (at least one) is "early" and the last third "late"; flat when the late mean RSS exceeds the early mean RSS by at '
  + 'most 50 MB and the late mean p99 is at most 1.5 x the early mean p99'
export const FLAT_RSS_MB = 50
export const FLAT_P99_RATIO = 1.5

export type Flatness = {
  rssSlopeMbPerMin: number | null; p99SlopeMsPerMin: number | null
  earlyRssMb: number; lateRssMb: number; rssGrowthMb: number; earlyP99Ms: number; lateP99Ms: number; flat: boolean
}

/** Slopes over the minutes after the first, and the flatness rule stated in FLAT_RULE. */
export function flatness(samples: MinuteSample[]): Flatness {
  const after = samples.filter((s) => s.minute > 1)
  const slopeOf = (pick: (s: MinuteSample) => number) => {
    const s = slope(after.map((x) => [x.minute, pick(x)]))
    return s === null ? null : Math.round(s * 100) / 100
  }
  const kept = samples.length >= 4 ? samples.slice(1) : samples
  const k = Math.max(1, Math.floor(kept.length / 3))
  const early = kept.slice(0, k)
  const late = kept.slice(-k)
  const earlyRssMb = mean(early.map((s) => s.rssMb))
  const lateRssMb = mean(late.map((s) => s.rssMb))
  const earlyP99Ms = mean(early.map((s) => s.p99Ms))
  const lateP99Ms = mean(late.map((s) => s.p99Ms))
  const rssGrowthMb = lateRssMb - earlyRssMb
  const flat = kept.length > 0 && rssGrowthMb <= FLAT_RSS_MB && lateP99Ms <= FLAT_P99_RATIO * earlyP99Ms
  const r1 = (x: number) => Math.round(x * 10) / 10
  return {
    rssSlopeMbPerMin: slopeOf((s) => s.rssMb), p99SlopeMsPerMin: slopeOf((s) => s.p99Ms),
    earlyRssMb: r1(earlyRssMb), lateRssMb: r1(lateRssMb), rssGrowthMb: r1(rssGrowthMb), earlyP99Ms: r1(earlyP99Ms), lateP99Ms: r1(lateP99Ms), flat,
  }
}

export type Ledger = {
  /** every run id a station posted at least once */
  sent: Set<string>
  /** ids the server answered 201 or 200 for */
  acknowledged: Set<string>
}

export type StoredRow = { uuid: string; copies: number }

export type Reconciliation = { inDatabase: number; lost: number; duplicated: number; unknownInDatabase: number; lostIds: string[] }

/**
 * Acknowledged runs missing from the database are lost; an id stored more than once, or a test (unit, step, start)
 * stored under two ids, is duplicated; a stored id no station sent is unknown.
 */
export function reconcile(ledger: Ledger, rows: StoredRow[], sameTestTwice: number): Reconciliation {
  const stored = new Set<string>()
  let duplicated = sameTestTwice
  let unknownInDatabase = 0
  for (const r of rows) {
    stored.add(r.uuid)
    if (r.copies > 1) duplicated += r.copies - 1
    if (!ledger.sent.has(r.uuid)) unknownInDatabase++
  }
  const lostIds = [...ledger.acknowledged].filter((id) => !stored.has(id))
  return { inDatabase: stored.size, lost: lostIds.length, duplicated, unknownInDatabase, lostIds: lostIds.slice(0, 10) }
}

export type Outcome = {
  lost: number; duplicated: number; unknownInDatabase: number; runsWithoutMeasurements: number; errors5xx: number
  refused: number; serverDied: boolean; rssRiseMb: number; maxGrowthMb: number
}

/** What makes the soak exit non-zero: correctness only, never a speed figure. */
export function failures(o: Outcome): string[] {
  const out: string[] = []
  if (o.lost) out.push(`${o.lost} acknowledged runs are not in the database`)
  if (o.duplicated) out.push(`${o.duplicated} runs are stored more than once`)
  if (o.unknownInDatabase) out.push(`${o.unknownInDatabase} stored runs were never sent`)
  if (o.runsWithoutMeasurements) out.push(`${o.runsWithoutMeasurements} stored runs have no measurements`)
  if (o.errors5xx) out.push(`${o.errors5xx} answers were 5xx other than 503`)
  if (o.refused) out.push(`${o.refused} valid runs were refused with 4xx`)
  if (o.serverDied) out.push('the server exited during the soak')
  if (o.rssRiseMb > o.maxGrowthMb) out.push(`the server's RSS rose ${Math.round(o.rssRiseMb)} MB after the first minute (bound ${o.maxGrowthMb} MB)`)
  return out
}
