import { describe, expect, it } from 'vitest'
import { hashPasswordOffline, verifyPasswordOffline } from '../../server/utils/password-hash'

describe('password hashing', () => {
  it('produces a salted scrypt PHC string that verifies only the right password', async () => {
    const a = await hashPasswordOffline('correct horse battery')
    const b = await hashPasswordOffline('correct horse battery')
    expect(a).toMatch(/^\$scrypt\$/)
    expect(a).not.toBe(b)
    expect(a).not.toContain('correct horse')
    expect(await verifyPasswordOffline(a, 'correct horse battery')).toBe(true)
    expect(await verifyPasswordOffline(a, 'correct horse batterY')).toBe(false)
  })
})
