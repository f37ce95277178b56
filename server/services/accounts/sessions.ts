import type { Knex } from 'knex'
import { updateUser } from '../../database/repositories/users'
import { writeAudit } from '../../database/repositories/audit'
import { writeTransaction } from '../../database/write-retries'

/** Signing out everywhere: raises the user's session version, which ends every session of the user on every instance. */
export async function endEverySession(db: Knex, userId: number): Promise<void> {
  await writeTransaction(db, async (trx) => {
    await updateUser(trx, userId, { endSessions: true })
    await writeAudit(trx, { userId, action: 'sign_out_everywhere', entity: 'user', entityId: userId })
  })
}
