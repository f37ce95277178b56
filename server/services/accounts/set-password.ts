import type { Knex } from 'knex'
import { findUserById, readSessionVersion, updateUser } from '../../database/repositories/users'
import { writeAudit } from '../../database/repositories/audit'
import { passwordProblem } from '../../../shared/utils/password-rule'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

export type Hasher = (plain: string) => Promise<string>

/** The password rule refused it: 422 pointing at the body field that carried it. */
function refused(message: string, pointer: string): RuleError {
  return new RuleError(422, message, [{ pointer, message }])
}

/** Refuses a password the rule does not allow for this user, pointing at the body field that carried it. */
export function checkNewPassword(password: string, owner: { email: string; name: string }, pointer: string): void {
  const why = passwordProblem(password, owner)
  if (why) throw refused(why, pointer)
}

/**
 * Writes the new hash and its audit row inside the caller's transaction, and ends every session of the user signed
 * in before (a session that should live on gets a cookie with the new version from its route).
 */
export async function writePassword(trx: Knex, userId: number, passwordHash: string, audit: { actorId: number | null; action: string; after?: unknown }): Promise<void> {
  await updateUser(trx, userId, { passwordHash, endSessions: true })
  await writeAudit(trx, { userId: audit.actorId, action: audit.action, entity: 'user', entityId: userId, after: audit.after ?? { passwordChanged: true } })
}

/**
 * A signed-in user's own change (the current password is checked by the route before this). Answers the new session
 * version, which the route seals into the changing session's cookie: the user's other sessions end.
 */
export async function changeOwnPassword(db: Knex, userId: number, newPassword: string, hash: Hasher): Promise<{ sessionVersion: number }> {
  const user = await findUserById(db, userId)
  if (!user) throw refused('No such user.', '/newPassword')
  checkNewPassword(newPassword, user, '/newPassword')
  const passwordHash = await hash(newPassword)
  return writeTransaction(db, async (trx) => {
    await writePassword(trx, userId, passwordHash, { actorId: userId, action: 'password_change' })
    return { sessionVersion: await readSessionVersion(trx, userId) }
  })
}
