// Values a station can post but no instrument can produce (refused), and values an instrument can produce but no
// working bench measures on these products (kept, judged, flagged, and left out of capability and charts).

export type ValueProblem = { pointer: string; message: string }

/** Why each kind of value is refused; the messages a station sees beside the pointer. */
export const IMPOSSIBLE_REASONS = {
  nonFinite: 'is not a finite number (a figure such as 1e400 overflows to infinity)',
  negativeJitter: 'RMS jitter is a root mean square and cannot be negative',
  negativeFrequency: 'a frequency counts cycles per second and cannot be negative',
  negativeCurrent: 'a source draws supply current; a reading below zero is a reversed or unzeroed meter',
  phaseNoiseAboveCarrier: 'phase noise above 0 dBc/Hz would put more power into 1 Hz of one sideband than the whole carrier carries',
  offsetBeyondCarrier: 'an offset at or beyond the carrier frequency is no sideband of that carrier',
} as const

/** Quantities that cannot be negative, by measurement name. */
const NON_NEGATIVE: Record<string, string> = {
  integrated_jitter: IMPOSSIBLE_REASONS.negativeJitter,
  output_frequency: IMPOSSIBLE_REASONS.negativeFrequency,
  supply_current: IMPOSSIBLE_REASONS.negativeCurrent,
}

export type PostedValues = {
  measurements: readonly { name: string; value: number; uncertainty?: number; offsetHz?: number; harmonic?: number }[]
  reference?: { frequencyHz: number; phaseNoise?: readonly { offsetHz: number; value: number }[] }
  traces?: readonly { name: string; points: readonly (readonly number[])[] }[]
  conditions?: { temperatureC: number; supplyV: number }
}

/**
 * Every value of a posted run that cannot be true, with a JSON Pointer to it. `carrierHz` is the output frequency the
 * product is built for: phase-noise offsets of the output (spots and the phase_noise_sweep trace) must lie below it,
 * offsets of the reference below the reference frequency.
 */
export function impossibleValues(run: PostedValues, carrierHz: number): ValueProblem[] {
  const out: ValueProblem[] = []
  const finite = (pointer: string, v: unknown): boolean => {
    if (typeof v === 'number' && !Number.isFinite(v)) { out.push({ pointer, message: IMPOSSIBLE_REASONS.nonFinite }); return false }
    return true
  }
  const offset = (pointer: string, f: number, carrier: number) => {
    if (finite(pointer, f) && f >= carrier) out.push({ pointer, message: `${IMPOSSIBLE_REASONS.offsetBeyondCarrier} (${carrier} Hz)` })
  }
  const level = (pointer: string, l: number) => {
    if (finite(pointer, l) && l > 0) out.push({ pointer, message: IMPOSSIBLE_REASONS.phaseNoiseAboveCarrier })
  }

  run.measurements.forEach((m, i) => {
    const at = `/measurements/${i}`
    finite(`${at}/uncertainty`, m.uncertainty)
    finite(`${at}/harmonic`, m.harmonic)
    if (m.name === 'phase_noise') {
      if (m.offsetHz !== undefined) offset(`${at}/offsetHz`, m.offsetHz, carrierHz)
      level(`${at}/value`, m.value)
      return
    }
    finite(`${at}/offsetHz`, m.offsetHz)
    if (!finite(`${at}/value`, m.value)) return
    const reason = NON_NEGATIVE[m.name]
    if (reason && m.value < 0) out.push({ pointer: `${at}/value`, message: reason })
  })

  const ref = run.reference
  if (ref) {
    const refOk = finite('/reference/frequencyHz', ref.frequencyHz)
    ref.phaseNoise?.forEach((p, i) => {
      if (refOk) offset(`/reference/phaseNoise/${i}/offsetHz`, p.offsetHz, ref.frequencyHz)
      else finite(`/reference/phaseNoise/${i}/offsetHz`, p.offsetHz)
      level(`/reference/phaseNoise/${i}/value`, p.value)
    })
  }

  run.traces?.forEach((t, i) => {
    t.points.forEach((p, j) => {
      const at = `/traces/${i}/points/${j}`
      if (t.name === 'phase_noise_sweep') {
        offset(`${at}/0`, p[0]!, carrierHz)
        level(`${at}/1`, p[1]!)
      } else {
        finite(`${at}/0`, p[0])
        finite(`${at}/1`, p[1])
      }
    })
  })

  if (run.conditions) {
    finite('/conditions/temperatureC', run.conditions.temperatureC)
    finite('/conditions/supplyV', run.conditions.supplyV)
  }
  return out
}

/**
 * Bounds beyond which a value is taken for a bench fault, per quantity, whatever the specification says. They matter
 * most for one-sided limits, which give no width to measure a value against.
 */
export const PLAUSIBLE_BOUNDS: Readonly<Record<string, { min?: number; max?: number; reason: string }>> = {
  // kT at 290 K is −174 dBm/Hz and its phase half −177 dBm/Hz (common practice): a floor of −200 dBc/Hz needs a
  // carrier of +23 dBm, more than any of these sources delivers
  phase_noise: { min: -200, reason: 'below −200 dBc/Hz, under the thermal noise floor of the carrier' },
  // beyond the dynamic range of bench spectrum analysers (typically 100–130 dB, from memory)
  harmonic_rejection: { max: 150, reason: 'above 150 dB of rejection, beyond what a spectrum analyser can resolve' },
  // a full period of a 1 MHz carrier: a unit that jittered this much would not lock, so the figure is a unit mistake
  integrated_jitter: { max: 1e-6, reason: 'above 1 µs RMS jitter, a full period of a 1 MHz carrier' },
}

/** A two-sided limit is implausibly missed when the value lies this many spec widths from the centre of the limits. */
export const SPEC_WIDTHS_FROM_CENTRE = 10

/**
 * Why a value is implausible for its quantity and limit, or null when it is plausible (or not a finite number, which
 * is refused before it gets here). Two-sided limits: more than ten spec widths from their centre. Any quantity with
 * a stated bound: beyond it.
 */
export function implausibleReason(name: string, value: number, limit: { lsl: number | null; usl: number | null } | null | undefined): string | null {
  if (!Number.isFinite(value)) return null
  const bound = Object.prototype.hasOwnProperty.call(PLAUSIBLE_BOUNDS, name) ? PLAUSIBLE_BOUNDS[name]! : undefined
  if (bound?.min !== undefined && value < bound.min) return bound.reason
  if (bound?.max !== undefined && value > bound.max) return bound.reason
  if (limit?.lsl != null && limit.usl != null && limit.usl > limit.lsl) {
    const width = limit.usl - limit.lsl
    if (Math.abs(value - (limit.lsl + limit.usl) / 2) > SPEC_WIDTHS_FROM_CENTRE * width) {
      return `more than ${SPEC_WIDTHS_FROM_CENTRE} spec widths (${SPEC_WIDTHS_FROM_CENTRE} × ${width}) from the centre of the limits`
    }
  }
  return null
}

/** Points of a phase-noise trace beyond the phase-noise bound: what is derived from such a trace is not trusted. */
export function implausibleTrace(points: readonly (readonly number[])[]): boolean {
  const min = PLAUSIBLE_BOUNDS.phase_noise!.min!
  return points.some((p) => Number.isFinite(p[1]) && p[1]! < min)
}
