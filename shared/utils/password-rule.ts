import { COMMON_PASSWORDS } from './common-passwords'

/** The one rule for every password a person sets (admin form, own change, reset by link). */
export const PASSWORD_MIN_LENGTH = 12

const COMMON = new Set(COMMON_PASSWORDS.map((p) => p.toLowerCase()))

export type PasswordOwner = { email?: string | null; name?: string | null }

/**
 * Why `password` may not be used, or null when it may. Length counts characters (code points), so a passphrase
 * in any script counts as typed. The owner's e-mail address, its local part and the name are refused in any case.
 */
export function passwordProblem(password: string, owner: PasswordOwner = {}): string | null {
  if ([...password].length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`
  const lower = password.trim().toLowerCase()
  if (COMMON.has(lower)) return 'This password is one of the most common ones; choose another.'
  const email = owner.email?.trim().toLowerCase()
  const name = owner.name?.trim().toLowerCase()
  const own = [email, email?.split('@')[0], name, name?.replace(/\s+/g, '')].filter((s): s is string => !!s)
  if (own.includes(lower) || own.includes(lower.replace(/\s+/g, ''))) return 'Do not use your e-mail address or name as your password.'
  return null
}
