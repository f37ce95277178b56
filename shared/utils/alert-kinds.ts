// The kinds of alert rule, the fields each one needs and how they read. Used by the rule editor, the body checks
// and the evaluator alike, so all three agree on what a rule of a kind means.

export const ALERT_KINDS = ['yield_low', 'cpk_low', 'control_rule', 'drift_toward_limit', 'calibration_due', 'station_silent', 'station_bias'] as const
export type AlertKind = (typeof ALERT_KINDS)[number]

/** Fields a rule may carry besides its name and kind. */
export type AlertRuleField = 'product' | 'station' | 'step' | 'parameter' | 'threshold' | 'windowUnits' | 'horizonUnits' | 'silentMinutes' | 'controlRules'

export type AlertKindInfo = {
  label: string
  /** One sentence with the rule's figures in braces, for the editor and the rule list. */
  reads: string
  required: readonly AlertRuleField[]
  optional: readonly AlertRuleField[]
  /** Rules of this kind are evaluated when a product's results change; the others on a clock. */
  onResults: boolean
  /** Notices go to the station's owner as well as to subscribers. */
  toStationOwner: boolean
}

export const ALERT_KIND_INFO: Record<AlertKind, AlertKindInfo> = {
  yield_low: {
    label: 'First-pass yield low',
    reads: 'first-pass yield at {step} below {threshold} % over the last {windowUnits} units',
    required: ['product', 'step', 'threshold', 'windowUnits'], optional: [], onResults: true, toStationOwner: false,
  },
  cpk_low: {
    label: 'Capability low',
    reads: 'Cpk of {parameter} below {threshold} over the last {windowUnits} units',
    required: ['product', 'step', 'parameter', 'threshold', 'windowUnits'], optional: [], onResults: true, toStationOwner: false,
  },
  control_rule: {
    label: 'Control-chart rule',
    reads: 'a point of {parameter} breaks Western Electric rule {controlRules} among the last {windowUnits} units',
    required: ['product', 'step', 'parameter', 'windowUnits', 'controlRules'], optional: [], onResults: true, toStationOwner: false,
  },
  drift_toward_limit: {
    label: 'Drift toward a limit',
    reads: 'the trend of {parameter} over the last {windowUnits} units crosses a limit within the next {horizonUnits} units',
    required: ['product', 'step', 'parameter', 'windowUnits', 'horizonUnits'], optional: [], onResults: true, toStationOwner: false,
  },
  calibration_due: {
    label: 'Calibration due',
    reads: 'an instrument of {station} is due for calibration within the due-soon period',
    required: [], optional: ['station'], onResults: false, toStationOwner: true,
  },
  station_silent: {
    label: 'Station silent',
    reads: '{station} has posted nothing for {silentMinutes} minutes while a lot it tested in the last 24 hours is open',
    required: ['silentMinutes'], optional: ['station'], onResults: false, toStationOwner: true,
  },
  station_bias: {
    label: 'Station bias',
    reads: "a station's mean of {parameter} differs from the other stations' by more than {threshold} over the last {windowUnits} units",
    required: ['product', 'step', 'parameter', 'threshold', 'windowUnits'], optional: [], onResults: true, toStationOwner: false,
  },
}

/** Western Electric rules as a bit mask (bit k−1 for rule k) and back. */
export function controlRulesMask(rules: readonly number[]): number {
  let mask = 0
  for (const r of rules) if (Number.isInteger(r) && r >= 1 && r <= 4) mask |= 1 << (r - 1)
  return mask
}
export function controlRulesFromMask(mask: number | null | undefined): number[] {
  const out: number[] = []
  for (let r = 1; r <= 4; r++) if (((mask ?? 0) >> (r - 1)) & 1) out.push(r)
  return out
}

/** Firings of one rule about one subject are raised at most once in this many seconds. */
export const ALERT_THROTTLE_S = 3600
