// Rules evaluated when a product's results change: each reads the last N values (or first attempts) of its product
// in one statement and applies the pure check of its kind.
import type { Knex } from 'knex'
import { checkControlRule, checkCpkLow, checkDriftTowardLimit, checkStationBias, checkYieldLow, chartBasis, type AlertPoint, type Limits } from '../../../shared/utils/alert-checks'
import { controlRulesFromMask } from '../../../shared/utils/alert-kinds'
import { parameterLabel } from '../../../shared/utils/value-format'
import { frozenBaseline, lastFirstAttempts, lastFiring, lastValues, type RuleRow } from '../../database/repositories/alert-reads'
import { revisionAt, type RevisionInForce } from '../../database/repositories/spec-lookup'
import { bookOf } from '../analytics/revision-limits'
import type { Outcome } from './outcome'

export type ProductContext = { productId: number; partNumber: string; lots: { id: number; code: string }[]; revisions: RevisionInForce[]; now: Date }

const qs = (o: Record<string, string | number | null | undefined>) =>
  Object.entries(o).filter(([, v]) => v !== null && v !== undefined && v !== '' && v !== 0).map(([k, v]) => `${k}=${encodeURIComponent(String(v))}`).join('&')
const paramLabel = (r: RuleRow) => parameterLabel(r.parameter!, r.qualifier)
const paramSubject = (r: RuleRow) => `product:${r.productId}/${r.step}/${r.parameter}/${r.qualifier}`
/** The trends page on the rule's part and parameter (it reads part, name, step and qualifier from the query). */
const trendsLink = (ctx: ProductContext, r: RuleRow) => `/trends?${qs({ part: ctx.partNumber, name: r.parameter, step: r.step, qualifier: r.qualifier })}`
/** The lot page with the parameter selected (name, step, q). */
const lotLink = (lot: string, r: RuleRow) => `/lots/${encodeURIComponent(lot)}?${qs({ name: r.parameter, step: r.step, q: r.qualifier })}`

function limitsInForce(ctx: ProductContext, r: RuleRow): { revisionId: number; limits: Limits; unit: string } | null {
  const rev = revisionAt(ctx.revisions, ctx.now)
  if (!rev) return null
  const l = bookOf(ctx.revisions).limitFor(rev.id, { step: r.step!, name: r.parameter!, qualifier: r.qualifier })
  return l ? { revisionId: rev.id, limits: { lsl: l.lsl, usl: l.usl }, unit: l.unit } : null
}

const toPoint = (v: Awaited<ReturnType<typeof lastValues>>[number]): AlertPoint => ({
  value: v.value, at: new Date(v.startedAt), runId: v.runId, serial: v.serial, stationId: v.stationId, station: v.station, lotId: v.lotId, lot: v.lot,
})

const base = (ctx: ProductContext, r: RuleRow, subject: string, subjectLabel: string, lotId: number | null) =>
  ({ subject, subjectLabel, productId: ctx.productId, lotId, stationId: null, instrumentId: null })

export async function evaluateResultRule(db: Knex, ctx: ProductContext, r: RuleRow): Promise<Outcome[]> {
  // a rule missing a field its kind needs (the rule editor never stores one) is skipped, not guessed at
  if (!r.step || !r.windowUnits || (r.kind !== 'yield_low' && !r.parameter)) return []
  if ((r.kind === 'yield_low' || r.kind === 'cpk_low' || r.kind === 'station_bias') && r.threshold === null) return []
  const lotIds = ctx.lots.map((l) => l.id)
  const n = r.windowUnits
  const key = { step: r.step!, name: r.parameter!, qualifier: r.qualifier }
  switch (r.kind) {
    case 'yield_low': {
      const units = await lastFirstAttempts(db, lotIds, r.step!, n)
      const c = checkYieldLow(units.map((u) => u.passed), { threshold: r.threshold!, windowUnits: n })
      const newest = units.at(-1)
      if (!c.fired || !newest) return []
      return [{ ...base(ctx, r, `product:${ctx.productId}/${r.step}`, `${ctx.partNumber} · ${r.step}`, newest.lotId), summary: c.summary, figures: c.figures, link: `/lots/${encodeURIComponent(newest.lot)}` }]
    }
    case 'cpk_low':
    case 'drift_toward_limit': {
      // against the limits in force, on the values judged by that same revision, so one figure never mixes two limit sets
      const inForce = limitsInForce(ctx, r)
      if (!inForce) return []
      const values = await lastValues(db, lotIds, { ...key, revisionId: inForce.revisionId }, n)
      const ys = values.map((v) => v.value)
      const c = r.kind === 'cpk_low'
        ? checkCpkLow(ys, inForce.limits, { threshold: r.threshold!, windowUnits: n }, inForce.unit)
        : checkDriftTowardLimit(ys, inForce.limits, { windowUnits: n, horizonUnits: r.horizonUnits ?? 0 }, inForce.unit)
      if (!c.fired) return []
      return [{ ...base(ctx, r, paramSubject(r), `${ctx.partNumber} · ${r.step} · ${paramLabel(r)}`, values.at(-1)?.lotId ?? null), summary: c.summary, figures: c.figures, link: trendsLink(ctx, r) }]
    }
    case 'control_rule': {
      const values = (await lastValues(db, lotIds, key, n)).map(toPoint)
      const newest = values.at(-1)
      if (!newest) return []
      // limits from the newest point's lot's frozen baseline when quality froze one, else from the window itself
      const basis = chartBasis(values.map((v) => v.value), await frozenBaseline(db, newest.lotId, key))
      const previous = await lastFiring(db, r.id, paramSubject(r))
      const testedAt = previous?.figures.find((f) => f.label === 'Tested at')?.value
      const after = typeof testedAt === 'string' ? new Date(testedAt) : null
      const c = checkControlRule(values, { rules: controlRulesFromMask(r.controlRules), windowUnits: n }, basis, after, limitsInForce(ctx, r)?.unit)
      if (!c.fired || !c.point) return []
      return [{ ...base(ctx, r, paramSubject(r), `${ctx.partNumber} · ${r.step} · ${paramLabel(r)}`, c.point.lotId), summary: c.summary, figures: c.figures, link: lotLink(c.point.lot, r) }]
    }
    case 'station_bias': {
      const values = (await lastValues(db, lotIds, key, n)).map(toPoint)
      return checkStationBias(values, { threshold: r.threshold!, windowUnits: n }, limitsInForce(ctx, r)?.unit).filter((s) => s.fired).map((s) => {
        const stationId = Number(s.key.slice('station:'.length))
        return {
          ...base(ctx, r, `${paramSubject(r)}/${s.key}`, `${s.label} · ${ctx.partNumber} · ${r.step} · ${paramLabel(r)}`, values.at(-1)?.lotId ?? null),
          stationId, summary: s.summary, figures: s.figures, link: trendsLink(ctx, r),
        }
      })
    }
    default:
      return []
  }
}
