// Throwaway staff accounts for tests that change passwords: the demo accounts keep theirs.
import { expect } from 'vitest'
import { call, freshAddress } from './http'

export const uniqueEmail = (tag: string) => `${tag}-${Date.now()}-${Math.floor(Math.random() * 1e6)}@tercet.test`

/** Creates a user through the admin API (the admin's cookie given) and answers its id and e-mail. */
export async function newUser(admin: string, o: { tag: string; password: string; name: string; role: 'engineer' | 'operator' }): Promise<{ id: number; email: string }> {
  const email = uniqueEmail(o.tag)
  const r = await call('POST', '/api/users', { cookie: admin, body: { email, name: o.name, role: o.role, password: o.password } })
  expect(r.status).toBe(201)
  return { id: r.body.user.id, email }
}

/** One sign-in attempt from an address of its own, so the per-address limits of other tests never refuse it. */
export const attemptSignIn = (email: string, password: string) =>
  call('POST', '/api/auth/login', { body: { email, password }, headers: { 'x-forwarded-for': freshAddress() } })
