import type { AlertKind } from '../utils/alert-kinds'

export type AlertRuleDto = {
  id: number
  name: string
  kind: AlertKind
  enabled: boolean
  productId: number | null
  partNumber: string | null
  stationId: number | null
  stationCode: string | null
  step: string | null
  parameter: string | null
  qualifier: number | null
  threshold: number | null
  windowUnits: number | null
  horizonUnits: number | null
  silentMinutes: number | null
  /** Western Electric rules watched (1–4). */
  controlRules: number[]
  updatedAt: string
  updatedBy: string | null
}

/** A figure behind a firing, shown as "label: value unit". */
export type AlertFigure = { label: string; value: number | string | null; unit?: string | null }

export type AlertCommentDto = { id: number; body: string; author: string; createdAt: string }

export type AlertFiringDto = {
  id: number
  ruleId: number
  ruleName: string
  kind: AlertKind
  subject: string
  subjectLabel: string
  summary: string
  figures: AlertFigure[]
  /** A page of Tercet that shows what fired (chart, station, instrument), relative to the site. */
  link: string
  raisedAt: string
  acknowledgedAt: string | null
  acknowledgedBy: string | null
  comments: AlertCommentDto[]
}

export type AlertSubscriptionTarget = 'rule' | 'product' | 'station'
export type AlertSubscriptionDto = { id: number; target: AlertSubscriptionTarget; targetId: number; label: string; createdAt: string }

/** A rule as the rules page lists it: how many firings it raised (a rule that raised any is disabled, not deleted). */
export type AlertRuleView = AlertRuleDto & { firings: number }

/** The body of a new rule; a field the kind does not use is refused (null is accepted as "not given"). */
export type AlertRuleInput = {
  name: string
  kind: AlertKind
  partNumber?: string | null
  stationId?: number | null
  step?: string | null
  parameter?: string | null
  qualifier?: number | null
  threshold?: number | null
  windowUnits?: number | null
  horizonUnits?: number | null
  silentMinutes?: number | null
  controlRules?: number[] | null
  enabled?: boolean
}
/** A change to a rule; a change of kind clears the stored fields the new kind does not use. */
export type AlertRuleChange = Partial<AlertRuleInput>

export type AlertRuleList = { rules: AlertRuleView[]; stations: { id: number; name: string }[] }

export type AlertState = 'open' | 'acknowledged' | 'all'
/** One page of firings, newest first; `next` is the cursor of the page after it, or null on the last page. */
export type AlertPage = { alerts: AlertFiringDto[]; next: string | null }
/** Unacknowledged firings: all of them, and those concerning the signed-in user. */
export type AlertCount = { open: number; mine: number }
