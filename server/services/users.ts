import type { Knex } from 'knex'
import type { Role } from '../../shared/utils/roles'
import { findUserById, insertUser, listUsers, updateUser, type UserRecord } from '../database/repositories/users'
import type { UserView } from '../../shared/types/user'
import { writeAudit } from '../database/repositories/audit'
import { findCustomer } from '../database/repositories/customers'
import { passwordProblem } from '../../shared/utils/password-rule'
import { RuleError } from './rule-error'
import { writeTransaction } from '../database/write-retries'

export type NewUser = { email: string; name: string; role: Role; customerId?: number | null; password: string }
export type UserChange = Partial<{ name: string; role: Role; customerId: number | null; disabled: boolean; password: string }>
type Hasher = (plain: string) => Promise<string>

/** An account rule refused the write: 422 pointing at the field. */
function refused(message: string, pointer: string): RuleError {
  return new RuleError(422, message, [{ pointer, message }])
}

function checkCustomerLink(role: Role, customerId: number | null | undefined): void {
  if (role === 'customer' && !customerId) throw refused('A customer user must belong to a customer.', '/customerId')
  if (role !== 'customer' && customerId) throw refused('Only customer users belong to a customer.', '/customerId')
}

/** The customer a customer user is linked to must exist (a deactivated one still may, for reading its history). */
async function checkCustomerExists(db: Knex, customerId: number | null | undefined): Promise<void> {
  if (customerId && !await findCustomer(db, customerId)) throw refused('No such customer.', '/customerId')
}

/** Every password set here follows the one rule (shared/utils/password-rule.ts). */
export function checkPasswordRule(password: string, owner: { email: string; name: string }): void {
  const why = passwordProblem(password, owner)
  if (why) throw refused(why, '/password')
}

/** The user as the administration pages read it. */
export function userView(u: UserRecord): UserView {
  return { ...u, lastSignInAt: u.lastSignInAt ? new Date(u.lastSignInAt).toISOString() : null, createdAt: new Date(u.createdAt).toISOString() }
}

export async function userList(db: Knex): Promise<UserView[]> {
  return (await listUsers(db)).map(userView)
}

function publicView(u: UserRecord | undefined) {
  return u && { id: u.id, email: u.email, name: u.name, role: u.role, customerId: u.customerId, disabled: u.disabled }
}

export async function createUser(db: Knex, actorId: number, input: NewUser, hash: Hasher): Promise<UserView> {
  checkCustomerLink(input.role, input.customerId)
  checkPasswordRule(input.password, input)
  const passwordHash = await hash(input.password)
  return writeTransaction(db, async (trx) => {
    await checkCustomerExists(trx, input.customerId)
    const id = await insertUser(trx, { email: input.email, name: input.name, role: input.role, customerId: input.customerId ?? null, passwordHash }).catch((e) => {
      if (e?.code === 'ER_DUP_ENTRY') throw new RuleError(409, 'A user with this e-mail address already exists.', [{ pointer: '/email', message: 'already in use' }])
      throw e
    })
    const user = (await findUserById(trx, id))!
    await writeAudit(trx, { userId: actorId, action: 'create', entity: 'user', entityId: id, after: publicView(user) })
    return userView(user)
  })
}

export async function changeUser(db: Knex, actorId: number, id: number, change: UserChange, hash: Hasher): Promise<UserView | undefined> {
  if (change.password !== undefined) {
    const current = await findUserById(db, id)
    if (current) checkPasswordRule(change.password, { email: current.email, name: change.name ?? current.name })
  }
  const passwordHash = change.password ? await hash(change.password) : undefined
  return writeTransaction(db, async (trx) => {
    const before = await findUserById(trx, id)
    if (!before) return undefined
    const role = change.role ?? before.role
    const customerId = change.customerId !== undefined ? change.customerId : (role === 'customer' ? before.customerId : null)
    checkCustomerLink(role, customerId)
    if (change.customerId !== undefined) await checkCustomerExists(trx, customerId)
    if (id === actorId && (change.disabled === true || (change.role && change.role !== 'admin'))) {
      throw refused('You cannot disable your own account or remove your own admin role.', change.disabled ? '/disabled' : '/role')
    }
    // a new password or disabling ends the user's sessions everywhere (enabling again does not revive them)
    const endSessions = !!passwordHash || change.disabled === true
    await updateUser(trx, id, { name: change.name, role: change.role, customerId, disabled: change.disabled, passwordHash, endSessions })
    const after = await findUserById(trx, id)
    const action = change.role && change.role !== before.role ? 'role_change' : change.disabled !== undefined && change.disabled !== before.disabled ? (change.disabled ? 'disable' : 'enable') : 'update'
    await writeAudit(trx, { userId: actorId, action, entity: 'user', entityId: id, before: publicView(before), after: { ...publicView(after), passwordChanged: !!passwordHash } })
    return after && userView(after)
  })
}
