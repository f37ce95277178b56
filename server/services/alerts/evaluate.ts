// The alert evaluator. Whichever app instance holds the 'alerts' lease evaluates: the rules of every product the
// statistics fold marked (new results), then — at most every clock period, recorded in the database — the rules
// that depend on the time of day (calibration due, station silent). A mark is cleared only if no fold marked the
// product again meanwhile, so results that arrive during an evaluation are evaluated next time.
import type { Knex } from 'knex'
import { hostname } from 'node:os'
import { ALERT_KINDS, ALERT_KIND_INFO, type AlertKind } from '../../../shared/utils/alert-kinds'
import { clearMark, enabledRules, newestLots, readMarks, type RuleRow } from '../../database/repositories/alert-reads'
import { claimPeriodicRun, releaseLease, takeLease } from '../../database/repositories/job-leases'
import { listEffectiveRevisions } from '../../database/repositories/spec-lookup'
import { isDatabaseUnavailable } from '../../utils/database-unavailable'
import { calibrationDueSoonDays } from '../settings'
import { evaluateClockRule } from './clock-rules'
import type { Outcome } from './outcome'
import { raise, throttleSeconds } from './raise'
import { evaluateResultRule } from './result-rules'

export const ALERT_LEASE = 'alerts'
export const ALERT_CLOCK = 'alerts-clock'
const MARKS_PER_PASS = 100
const RESULT_KINDS = ALERT_KINDS.filter((k) => ALERT_KIND_INFO[k].onResults) as AlertKind[]
const CLOCK_KINDS = ALERT_KINDS.filter((k) => !ALERT_KIND_INFO[k].onResults) as AlertKind[]

export type EvaluateOptions = {
  now?: Date
  /** this instance's name in the lease */
  owner?: string
  /** how long the lease lasts without renewal; an instance that dies stops evaluating for at most this long */
  leaseMs?: number
  /** period of the clock kinds */
  clockMs?: number
  throttleS?: number
}
export type EvaluateResult = { evaluated: boolean; products: number; clock: boolean; raised: number[]; failedRules: number[] }

/**
 * One rule's failure (limits a revision got wrong, say) must not hold up the others or leave its product's mark
 * for ever: it is reported and the evaluation goes on. A database that is away fails the whole pass instead.
 */
async function guarded(ruleId: number, out: EvaluateResult, work: () => Promise<void>): Promise<void> {
  try {
    await work()
  } catch (e: any) {
    if (isDatabaseUnavailable(e)) throw e
    out.failedRules.push(ruleId)
    console.warn(`[tercet] alert rule ${ruleId} could not be evaluated: ${e?.message ?? e}`)
  }
}

export const defaultOwner = () => `${hostname()}:${process.pid}`
const envMs = (name: string, fallback: number) => { const n = Number(process.env[name]); return Number.isFinite(n) && n > 0 ? n : fallback }
export const evalPeriodMs = () => envMs('TERCET_ALERT_EVAL_MS', 2000)
export const clockPeriodMs = () => envMs('TERCET_ALERT_CLOCK_MS', 60_000)

export async function evaluateAlerts(db: Knex, opts: EvaluateOptions = {}): Promise<EvaluateResult> {
  const now = opts.now ?? new Date()
  const owner = opts.owner ?? defaultOwner()
  const throttleS = opts.throttleS ?? throttleSeconds()
  const out: EvaluateResult = { evaluated: false, products: 0, clock: false, raised: [], failedRules: [] }
  if (!(await takeLease(db, ALERT_LEASE, owner, opts.leaseMs ?? 30_000, now))) return out
  out.evaluated = true
  const raiseEach = async (rule: RuleRow, outcomes: Outcome[]) => {
    for (const o of outcomes) {
      const id = await raise(db, rule, o, now, throttleS)
      if (id !== null) out.raised.push(id)
    }
  }
  for (const mark of await readMarks(db, MARKS_PER_PASS)) {
    const rules = await enabledRules(db, { productId: mark.productId, kinds: RESULT_KINDS })
    if (rules.length) {
      const [lots, revisions] = await Promise.all([newestLots(db, mark.productId), listEffectiveRevisions(db, mark.productId)])
      const ctx = { productId: mark.productId, partNumber: rules[0]!.partNumber ?? String(mark.productId), lots, revisions, now }
      for (const rule of rules) await guarded(rule.id, out, async () => raiseEach(rule, await evaluateResultRule(db, ctx, rule)))
    }
    await clearMark(db, mark)
    out.products++
  }
  if (await claimPeriodicRun(db, ALERT_CLOCK, opts.clockMs ?? clockPeriodMs(), now)) {
    out.clock = true
    const rules = await enabledRules(db, { kinds: CLOCK_KINDS })
    // the due-soon period is read once per evaluation, never kept in the process
    const days = rules.some((r) => r.kind === 'calibration_due') ? await calibrationDueSoonDays(db) : 0
    for (const rule of rules) await guarded(rule.id, out, async () => raiseEach(rule, await evaluateClockRule(db, rule, now, days)))
  }
  return out
}

/** Gives the evaluation lease up (at shutdown), so another instance takes over at once. */
export async function stopEvaluating(db: Knex, owner = defaultOwner()): Promise<void> {
  await releaseLease(db, ALERT_LEASE, owner)
}
