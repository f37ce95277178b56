export type DecisionRule = 'simple' | 'guarded'

export interface Limit {
  lsl: number | null
  usl: number | null
  rule: DecisionRule
  /** Expanded uncertainty (k = 2) assumed when a result carries none. */
  defaultUncertainty: number | null
}

export type Verdict = 'pass' | 'fail'

/**
 * inside: within [LSL + w, USL − w]; guard: within w of a tolerance limit on either side
 * (the conditional pass / conditional fail band of a non-binary statement); outside: beyond
 * LSL − w or USL + w. With w = 0 there is no guard zone.
 */
export type Zone = 'inside' | 'guard' | 'outside'

export interface Judgement {
  verdict: Verdict
  guardBand: number
  zone: Zone
}

export function hasLimit(limit: Pick<Limit, 'lsl' | 'usl'> | null | undefined): boolean {
  return limit != null && (limit.lsl != null || limit.usl != null)
}

function requireUncertainty(name: string, u: number): void {
  if (!Number.isFinite(u) || u < 0) throw new RangeError(`${name} must be a finite number ≥ 0, got ${u}`)
}

/** w: the result's own expanded uncertainty, else the limit's default, else 0. */
export function guardBandWidth(limit: Limit, uncertainty?: number | null): number {
  if (uncertainty != null) {
    requireUncertainty('uncertainty', uncertainty)
    return uncertainty
  }
  if (limit.defaultUncertainty != null) {
    requireUncertainty('defaultUncertainty', limit.defaultUncertainty)
    return limit.defaultUncertainty
  }
  return 0
}

function checkLimit(limit: Limit): void {
  if (!hasLimit(limit)) throw new Error('limit has neither lsl nor usl; report the result as information only')
  if (limit.lsl != null && !Number.isFinite(limit.lsl)) throw new RangeError(`lsl must be finite, got ${limit.lsl}`)
  if (limit.usl != null && !Number.isFinite(limit.usl)) throw new RangeError(`usl must be finite, got ${limit.usl}`)
  if (limit.lsl != null && limit.usl != null && limit.lsl > limit.usl) {
    throw new RangeError(`lsl ${limit.lsl} is above usl ${limit.usl}`)
  }
}

/** Judges one result against its tolerance limits; both ends of an acceptance interval pass. */
export function judge(value: number, limit: Limit, uncertainty?: number | null): Judgement {
  checkLimit(limit)
  const w = guardBandWidth(limit, uncertainty)
  if (!Number.isFinite(value)) return { verdict: 'fail', guardBand: w, zone: 'outside' }

  const lsl = limit.lsl ?? -Infinity
  const usl = limit.usl ?? Infinity
  const inside = value >= lsl + w && value <= usl - w
  const withinWidened = value >= lsl - w && value <= usl + w
  const zone: Zone = inside ? 'inside' : withinWidened ? 'guard' : 'outside'

  const pass = limit.rule === 'guarded' ? inside : value >= lsl && value <= usl
  return { verdict: pass ? 'pass' : 'fail', guardBand: w, zone }
}
