// Following a rule, a product or a station: its firings then count as one's own (the header badge, "concerning me").
import type { Knex } from 'knex'
import type { AlertSubscriptionDto, AlertSubscriptionTarget } from '../../../shared/types/alert'
import { deleteSubscription, findSubscription, insertSubscription, subscriptionsOf, targetExists } from '../../database/repositories/alert-subscriptions'
import { RuleError } from '../rule-error'

export const mySubscriptions = (db: Knex, userId: number) => subscriptionsOf(db, userId)

/**
 * Follows a target. Following it again is not an error: the answer is the existing subscription and `created` false,
 * so a toggle pressed twice lands in the same state.
 */
export async function follow(db: Knex, userId: number, target: AlertSubscriptionTarget, targetId: number): Promise<{ subscription: AlertSubscriptionDto; created: boolean }> {
  if (!await targetExists(db, target, targetId)) throw new RuleError(422, `There is no ${target} with this id.`, [{ pointer: '/targetId', message: `is not a ${target}` }])
  let id = await findSubscription(db, userId, target, targetId)
  let created = false
  if (id === undefined) {
    try {
      id = await insertSubscription(db, userId, target, targetId)
      created = true
    } catch (e) {
      // a concurrent request of the same user followed it first
      if ((e as { code?: string })?.code !== 'ER_DUP_ENTRY') throw e
      id = (await findSubscription(db, userId, target, targetId))!
    }
  }
  return { subscription: (await subscriptionsOf(db, userId, id))[0]!, created }
}

/** Stops following; another user's subscription answers as one that does not exist. */
export async function unfollow(db: Knex, userId: number, id: number): Promise<void> {
  if (!await deleteSubscription(db, userId, id)) throw new RuleError(404, 'No such subscription.')
}
