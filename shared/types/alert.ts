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
