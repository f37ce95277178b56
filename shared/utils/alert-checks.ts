// The test behind each kind of alert rule, as pure functions of the data the evaluator reads: no database, no clock.
// Each answers whether the rule fires, the figures a reader checks it by, and one sentence saying what happened.
import type { AlertFigure } from '../types/alert'
import { capabilityFromValues } from './capability'
import { individualsLimits, westernElectricHits, type WesternElectricRule } from './control'
import { linearRegression } from './regression'
import { formatFigure } from './value-format'

export type CheckResult = { fired: boolean; figures: AlertFigure[]; summary: string }
/** A check about one of several subjects (a station, an instrument): `key` ends the firing's subject. */
export type SubjectResult = CheckResult & { key: string; label: string }

/** One value of a parameter in test order, with where it came from. */
export type AlertPoint = { value: number; at: Date; runId: string; serial: string; stationId: number; station: string; lotId: number; lot: string }
export type Limits = { lsl: number | null; usl: number | null }

/** Fewest values a capability figure is worth alerting on, whatever the window. */
export const MIN_CPK_VALUES = 10
/** Fewest values per station (and among the others) before a station's mean is compared. */
export const MIN_BIAS_VALUES = 5
/** Fewest values a trend line is fitted to. */
export const MIN_DRIFT_VALUES = 5

const QUIET = (summary: string, figures: AlertFigure[] = []): CheckResult => ({ fired: false, figures, summary })
const round = (x: number, digits = 4) => Number(x.toPrecision(digits))
// units until the line reaches a limit, rounded up (a ratio of 11.000000000000002 is 11 units, not 12)

/**
 * First-pass yield over the last `windowUnits` units by first-attempt test time, oldest first: the share whose first
 * attempt passed. Fires below `threshold` % once the window is full (a half-filled window says little).
 */
export function checkYieldLow(firstAttemptsPassed: readonly boolean[], rule: { threshold: number; windowUnits: number }): CheckResult {
  const window = firstAttemptsPassed.slice(-rule.windowUnits)
  if (window.length < rule.windowUnits || !window.length) return QUIET(`only ${window.length} of ${rule.windowUnits} units tested`)
  const passed = window.filter(Boolean).length
  const fpy = (100 * passed) / window.length
  const figures: AlertFigure[] = [
    { label: 'First-pass yield', value: round(fpy), unit: '%' }, { label: 'Passed first time', value: passed },
    { label: 'Units', value: window.length }, { label: 'Threshold', value: rule.threshold, unit: '%' },
  ]
  const fired = fpy < rule.threshold
  return { fired, figures, summary: `first-pass yield ${round(fpy, 3)} % over the last ${window.length} units (${passed} passed first time)${fired ? `, below ${rule.threshold} %` : ''}` }
}

/**
 * Cpk (σ within = MR̄/d2, capabilityFromValues) of the last `windowUnits` first-attempt values in test order against
 * the limits in force. Quiet without limits, with fewer than MIN_CPK_VALUES values or a window not yet full.
 */
export function checkCpkLow(valuesInTestOrder: readonly number[], limits: Limits, rule: { threshold: number; windowUnits: number }, unit = ''): CheckResult {
  const values = valuesInTestOrder.slice(-rule.windowUnits)
  if (limits.lsl === null && limits.usl === null) return QUIET('no limits in force')
  if (values.length < Math.max(MIN_CPK_VALUES, rule.windowUnits)) return QUIET(`only ${values.length} values`)
  const c = capabilityFromValues(values, limits)
  if (c.cpk === null) return QUIET('Cpk not defined (no spread)')
  const figures: AlertFigure[] = [
    { label: 'Cpk', value: round(c.cpk, 3) }, { label: 'Threshold', value: rule.threshold }, { label: 'Values', value: c.n },
    { label: 'Mean', value: round(c.mean!, 6), unit }, { label: 'σ within', value: round(c.sigmaWithin!, 4), unit },
    { label: 'LSL', value: limits.lsl, unit }, { label: 'USL', value: limits.usl, unit },
  ]
  const fired = c.cpk < rule.threshold
  return { fired, figures, summary: `Cpk ${round(c.cpk, 3)} over the last ${c.n} values${fired ? `, below ${rule.threshold}` : ''}` }
}

/** Centre and σ of an individuals chart: a frozen baseline when the lot has one, else the window itself. */
export type ChartBasis = { centre: number; sigma: number; source: 'baseline' | 'window' }

export function chartBasis(values: readonly number[], baseline?: { centre: number; sigma: number } | null): ChartBasis | null {
  if (baseline && baseline.sigma > 0) return { centre: baseline.centre, sigma: baseline.sigma, source: 'baseline' }
  const l = individualsLimits(values)
  return l && l.sigma > 0 ? { centre: l.centre, sigma: l.sigma, source: 'window' } : null
}

/**
 * Western Electric rules on the individuals chart of `points` (test order). Fires on the newest point that breaks a
 * watched rule and was tested after `after` (the point the previous firing was about), so a hit is raised once and
 * an old one never again, whatever the throttle.
 */
export function checkControlRule(
  points: readonly AlertPoint[], rule: { rules: readonly number[]; windowUnits: number }, basis: ChartBasis | null, after: Date | null, unit = '',
): CheckResult & { point?: AlertPoint; broken?: WesternElectricRule[] } {
  const window = points.slice(-rule.windowUnits)
  if (!basis || window.length < 2) return QUIET('too few values for a chart')
  const hits = westernElectricHits(window.map((p) => p.value), basis.centre, basis.sigma)
  for (let i = window.length - 1; i >= 0; i--) {
    const p = window[i]!
    if (after && p.at.getTime() <= after.getTime()) break
    const broken = hits[i]!.filter((r) => rule.rules.includes(r))
    if (!broken.length) continue
    const z = (p.value - basis.centre) / basis.sigma
    return {
      fired: true, point: p, broken,
      figures: [
        { label: 'Rule broken', value: broken.join(', ') }, { label: 'Value', value: p.value, unit }, { label: 'Distance from centre', value: round(z, 3), unit: 'σ' },
        { label: 'Centre', value: round(basis.centre, 6), unit }, { label: 'σ', value: round(basis.sigma, 4), unit },
        { label: 'Limits from', value: basis.source === 'baseline' ? 'frozen baseline' : `last ${window.length} values` },
        { label: 'Serial', value: p.serial }, { label: 'Station', value: p.station }, { label: 'Tested at', value: p.at.toISOString() }, { label: 'Run', value: p.runId },
      ],
      summary: `${p.serial} (${p.station}) breaks Western Electric rule ${broken.join(' and ')}: ${formatFigure(p.value, unit)} is ${formatFigure(round(z, 3))} σ from the centre`,
    }
  }
  return QUIET(`no new point breaks rule ${rule.rules.join(', ')}`)
}

/**
 * Least-squares line through the last `windowUnits` values against x = 1…N; fires when the fitted value at x = N is
 * still within the limits and the line reaches a limit by x = N + `horizonUnits`.
 */
export function checkDriftTowardLimit(valuesInTestOrder: readonly number[], limits: Limits, rule: { windowUnits: number; horizonUnits: number }, unit = ''): CheckResult {
  const ys = valuesInTestOrder.slice(-rule.windowUnits)
  if (limits.lsl === null && limits.usl === null) return QUIET('no limits in force')
  if (ys.length < Math.max(MIN_DRIFT_VALUES, rule.windowUnits)) return QUIET(`only ${ys.length} values`)
  const n = ys.length
  const fit = linearRegression(ys.map((_, i) => i + 1), ys)
  if (!fit) return QUIET('no line')
  const current = fit.intercept + fit.slope * n
  const projected = fit.intercept + fit.slope * (n + rule.horizonUnits)
  const inside = (limits.lsl === null || current >= limits.lsl) && (limits.usl === null || current <= limits.usl)
  const limit = fit.slope > 0 ? limits.usl : fit.slope < 0 ? limits.lsl : null
  const crosses = limit !== null && (fit.slope > 0 ? projected > limit : projected < limit)
  const figures: AlertFigure[] = [
    { label: 'Slope', value: round(fit.slope, 4), unit: unit ? `${unit} per unit` : 'per unit' }, { label: 'Fitted now', value: round(current, 6), unit },
    { label: `Projected in ${rule.horizonUnits} units`, value: round(projected, 6), unit }, { label: fit.slope > 0 ? 'USL' : 'LSL', value: limit, unit },
    { label: 'Units to crossing', value: limit === null || fit.slope === 0 ? null : Math.max(0, Math.ceil(Number(((limit - current) / fit.slope).toPrecision(12)))) },
  ]
  if (!inside) return QUIET('the fitted value is already outside the limits', figures)
  if (!crosses) return QUIET('the trend stays within the limits over the horizon', figures)
  return {
    fired: true, figures,
    summary: `trend of ${formatFigure(fit.slope, unit ? `${unit} per unit` : 'per unit')} reaches the ${fit.slope > 0 ? 'USL' : 'LSL'} ${formatFigure(limit, unit)} in about ${figures[4]!.value} units`,
  }
}

/**
 * Per station among the last `windowUnits` values: its mean against the mean of every other station's values.
 * Compared only with at least MIN_BIAS_VALUES values on each side; fires for each station whose |difference| > threshold.
 */
export function checkStationBias(points: readonly AlertPoint[], rule: { threshold: number; windowUnits: number }, unit = ''): SubjectResult[] {
  const window = points.slice(-rule.windowUnits)
  const byStation = new Map<number, { name: string; values: number[] }>()
  for (const p of window) {
    const s = byStation.get(p.stationId) ?? { name: p.station, values: [] }
    s.values.push(p.value)
    byStation.set(p.stationId, s)
  }
  const mean = (xs: readonly number[]) => xs.reduce((a, b) => a + b, 0) / xs.length
  const out: SubjectResult[] = []
  for (const [id, s] of byStation) {
    const others = window.filter((p) => p.stationId !== id).map((p) => p.value)
    if (s.values.length < MIN_BIAS_VALUES || others.length < MIN_BIAS_VALUES) continue
    const diff = mean(s.values) - mean(others)
    const fired = Math.abs(diff) > rule.threshold
    out.push({
      key: `station:${id}`, label: s.name, fired,
      figures: [
        { label: 'Difference', value: round(diff, 4), unit }, { label: 'Threshold', value: rule.threshold, unit },
        { label: `Mean on ${s.name}`, value: round(mean(s.values), 6), unit }, { label: 'Mean on the others', value: round(mean(others), 6), unit },
        { label: `Values on ${s.name}`, value: s.values.length }, { label: 'Values on the others', value: others.length },
      ],
      summary: `${s.name} reads ${formatFigure(diff, unit)} from the other stations over the last ${window.length} values`,
    })
  }
  return out
}

export type HeldInstrument = { instrumentId: number; assetNumber: string; stationId: number; station: string; dueAt: Date | null }
const DAY_MS = 86_400_000

/**
 * Instruments held now whose record in force falls due within `days` — or is past due, or missing, which is worse
 * and fires too. One subject per instrument and due date, so each due date is raised once.
 */
export function checkCalibrationDue(held: readonly HeldInstrument[], now: Date, days: number): SubjectResult[] {
  return held.flatMap((i) => {
    const left = i.dueAt === null ? -Infinity : i.dueAt.getTime() - now.getTime()
    if (left > days * DAY_MS) return []
    const due = i.dueAt ? i.dueAt.toISOString().slice(0, 10) : 'none'
    const daysLeft = i.dueAt ? Math.floor(left / DAY_MS) : null
    const state = i.dueAt === null ? 'has no calibration in force' : left <= 0 ? `was due on ${due}` : `is due on ${due}, in ${daysLeft} days`
    return [{
      key: `instrument:${i.instrumentId}/due:${due}`, label: `${i.assetNumber} on ${i.station}`, fired: true,
      figures: [
        { label: 'Instrument', value: i.assetNumber }, { label: 'Station', value: i.station }, { label: 'Due', value: i.dueAt ? due : null },
        // whole days either side of the due instant: 3.6 days past it reads "3 days overdue", not "−4 days left"
        i.dueAt && left <= 0 ? { label: 'Days overdue', value: Math.floor(-left / DAY_MS), unit: 'days' } : { label: 'Days left', value: daysLeft, unit: 'days' },
        { label: 'Due-soon period', value: days, unit: 'days' },
      ],
      summary: `${i.assetNumber} on ${i.station} ${state}`,
    }]
  })
}

export type StationActivity = { stationId: number; station: string; lastRunId: number | null; lastRunAt: Date | null; openLotsRecently: string[] }

/**
 * A station silent for more than `minutes` while a lot it posted to in the last 24 hours is still open. One
 * subject per station and silence (its last run), so a silence is raised once.
 */
export function checkStationSilent(stations: readonly StationActivity[], now: Date, minutes: number): SubjectResult[] {
  return stations.flatMap((s) => {
    if (!s.lastRunAt || s.lastRunId === null || !s.openLotsRecently.length) return []
    const silent = (now.getTime() - s.lastRunAt.getTime()) / 60_000
    if (!(silent > minutes)) return []
    return [{
      key: `station:${s.stationId}/after-run:${s.lastRunId}`, label: s.station, fired: true,
      figures: [
        { label: 'Silent for', value: Math.floor(silent), unit: 'min' }, { label: 'Allowed', value: minutes, unit: 'min' },
        { label: 'Last run at', value: s.lastRunAt.toISOString() }, { label: 'Open lots', value: s.openLotsRecently.join(', ') },
      ],
      summary: `${s.station} has posted nothing for ${Math.floor(silent)} minutes while ${s.openLotsRecently.join(', ')} ${s.openLotsRecently.length === 1 ? 'is' : 'are'} open`,
    }]
  })
}
