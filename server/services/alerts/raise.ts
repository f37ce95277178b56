// Raising a firing: one transaction holds the rule's row, checks the throttle, stores the firing and queues the
// mail to everyone who follows it (and the station's owner for station kinds), so a message exists exactly when
// its firing does.
import type { Knex } from 'knex'
import { ALERT_KIND_INFO, ALERT_THROTTLE_S } from '../../../shared/utils/alert-kinds'
import { lastFiring, type RuleRow } from '../../database/repositories/alert-reads'
import { insertFiring, lockEnabledRule, stationOwner, subscribers, type Recipient } from '../../database/repositories/alert-firings-write'
import { enqueueMail } from '../mail/outbox'
import { alertRaised, calibrationDue } from '../mail/templates'
import type { Outcome } from './outcome'
import { writeTransaction } from '../../database/write-retries'

/** Seconds between two firings of one rule about one subject (TERCET_ALERT_THROTTLE_S overrides, for tests). */
export function throttleSeconds(env: NodeJS.ProcessEnv = process.env): number {
  const n = Number(env.TERCET_ALERT_THROTTLE_S)
  return env.TERCET_ALERT_THROTTLE_S !== undefined && Number.isFinite(n) && n >= 0 ? n : ALERT_THROTTLE_S
}

/**
 * Raises the outcome unless the rule fired about the same subject within the throttle (or ever, for a subject that
 * names one episode); the firing id, or null.
 */
export async function raise(db: Knex, rule: RuleRow, o: Outcome, now: Date, throttleS: number): Promise<number | null> {
  return writeTransaction(db, async (trx) => {
    if (!(await lockEnabledRule(trx, rule.id))) return null
    const last = (await lastFiring(trx, rule.id, o.subject))?.raisedAt
    if (last && (o.once || now.getTime() - last.getTime() < throttleS * 1000)) return null
    const id = await insertFiring(trx, { ...o, ruleId: rule.id, raisedAt: now })
    const info = ALERT_KIND_INFO[rule.kind]
    const owner = info.toStationOwner && o.stationId !== null ? await stationOwner(trx, o.stationId) : null
    const followers = await subscribers(trx, { ruleId: rule.id, productId: rule.productId ?? o.productId, stationId: o.stationId })
    const seen = new Set<number>()
    const send = async (to: Recipient, asOwner: boolean) => {
      if (seen.has(to.userId)) return
      seen.add(to.userId)
      const m = asOwner && o.instrument
        ? calibrationDue({ name: to.name, ...o.instrument, link: o.link })
        : alertRaised({ name: to.name, ruleName: rule.name, kindLabel: info.label, subjectLabel: o.subjectLabel, summary: o.summary, figures: o.figures, link: o.link, raisedAt: now })
      await enqueueMail(trx, { to: [to.email], template: asOwner && o.instrument ? 'calibrationDue' : 'alertRaised', ...m })
    }
    if (owner) await send(owner, true)
    for (const f of followers) await send(f, false)
    return id
  })
}
