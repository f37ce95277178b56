import { readdirSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { enqueueMail } from '../../../server/services/mail/outbox'
import { faultEvents, sleep, startRig, type Rig } from './rig'

// The mail sender and the alert evaluator while the database goes away for a while: every queued message reaches
// the relay exactly once, and a rule that fires around the outage fires once.
let rig: Rig
beforeAll(async () => {
  rig = await startRig({
    // the lease outlasts the outage, so a message sent just before it is marked afterwards rather than sent again
    TERCET_MAIL_LEASE_MS: '30000', TERCET_ALERT_EVAL_MS: '500', TERCET_ALERT_CLOCK_MS: '1000',
  })
})
afterAll(async () => { await rig?.close() })

const MESSAGES = 300

function received(dir: string): { messageId: string; to: string[] }[] {
  return readdirSync(dir).filter((f) => f.endsWith('.json')).map((f) => JSON.parse(readFileSync(resolve(dir, f), 'utf8')))
}

async function until(what: string, test: () => Promise<boolean>, timeoutMs = 120_000): Promise<void> {
  const deadline = Date.now() + timeoutMs
  while (!(await test())) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`)
    await sleep(250)
  }
}

describe('background jobs through a database outage', () => {
  it('sends every queued message once and raises each firing once', async () => {
    const db = rig.db
    await db.transaction(async (trx) => {
      for (let i = 0; i < MESSAGES; i++) {
        await enqueueMail(trx, { to: [`reader-${i}@faults.test`], template: 'faultCheck', subject: `Outage check ${i}`, text: `message ${i}`, html: `<p>message ${i}</p>` })
      }
    })
    const sentCount = async () => Number((await db('mail_outbox').where({ status: 'sent' }).count({ n: '*' }))[0]!.n)
    await until('the first messages to go out', async () => (await sentCount()) >= 40)

    // a rule about silent stations (any silence at all), followed by the administrator, so its firings queue mail too
    const admin = await db('users').where({ email: 'admin@tercet.test' }).first('id')
    const [ruleId] = await db('alert_rules').insert({ name: 'Outage check: silent stations', kind: 'station_silent', silent_minutes: 0, enabled: true })
    await db('alert_subscriptions').insert({ user_id: admin.id, target: 'rule', target_id: ruleId })
    await sleep(300)

    const sentBefore = await sentCount()
    const t0 = Date.now()
    await rig.stopDb('clean')
    await sleep(8000)
    await rig.startDb()
    const outageS = (Date.now() - t0) / 1000

    await until('every message to be sent', async () => Number((await db('mail_outbox').whereNot({ status: 'sent' }).count({ n: '*' }))[0]!.n) === 0)
    // firings settle: nothing new for a few evaluation periods
    let firings = -1
    await until('the rule\'s firings to settle', async () => {
      const n = Number((await db('alert_firings').where({ rule_id: ruleId }).count({ n: '*' }))[0]!.n)
      const settled = n > 0 && n === firings
      firings = n
      if (!settled) await sleep(3000)
      return settled
    })
    await until('every message to be sent', async () => Number((await db('mail_outbox').whereNot({ status: 'sent' }).count({ n: '*' }))[0]!.n) === 0)
    await sleep(1000)

    const outbox: { message_id: string }[] = await db('mail_outbox').select('message_id')
    const got = received(rig.mailDir)
    const times = new Map<string, number>()
    for (const m of got) times.set(m.messageId, (times.get(m.messageId) ?? 0) + 1)
    const lost = outbox.filter((m) => !times.has(m.message_id)).length
    const doubled = [...times.values()].filter((n) => n > 1).length
    const subjects: { subject: string; n: number }[] = await db('alert_firings').where({ rule_id: ruleId }).groupBy('subject').select('subject', db.raw('COUNT(*) AS n'))
    const firedTwice = subjects.filter((s) => Number(s.n) > 1).length
    const stopped = faultEvents(rig.app.err, 'database-available').map((e) => e.jobPassesStopped)
    process.stdout.write(JSON.stringify({
      test: 'mail and alerts through an outage', outageS, sentBefore, queued: outbox.length, delivered: got.length, lost, doubled,
      firings, firedTwice, jobPassesStopped: stopped,
    }) + '\n')

    expect(outbox.length).toBeGreaterThanOrEqual(MESSAGES)
    // the outage came while the sender was still at work
    expect(sentBefore).toBeLessThan(MESSAGES)
    expect({ lost, doubled, delivered: got.length }).toEqual({ lost: 0, doubled: 0, delivered: outbox.length })
    expect(subjects.length).toBeGreaterThan(0)
    expect(firedTwice).toBe(0)
    // the jobs reported the outage through the fault log, not a trace per pass (the mail sender may have spent the
    // outage waiting to mark a message it had handed over rather than stopping a pass)
    expect(stopped.some((jobs) => 'evaluating alert rules' in jobs)).toBe(true)
    expect(rig.app.err.filter((l) => /^\s+at /.test(l)).slice(0, 5)).toEqual([])
  })
})
