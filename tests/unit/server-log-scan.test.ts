import { describe, expect, it } from 'vitest'
import { leaksIn } from '../support/server-log'

// The log scan of tests/e2e/server-logs.after-all.test.ts finds each kind of secret it looks for, and leaves alone
// the lines that only look like one.
const secrets = [{ name: 'station token', value: 'tst_abcdefghijklmnopqrstuvwxyz0123456789ABCDEF' }, { name: 'password', value: 'hunter2-long-phrase' }]

describe('leaksIn', () => {
  it('finds a secret anywhere in a line, with its line number, and masks it in the excerpt', () => {
    const text = 'started\n{"msg":"run","auth":"tst_abcdefghijklmnopqrstuvwxyz0123456789ABCDEF"}\nbody {"password":"hunter2-long-phrase"}\n'
    const leaks = leaksIn(text, secrets)
    expect(leaks.map((l) => [l.what, l.line])).toEqual([['station token', 2], ['password', 3]])
    expect(leaks.map((l) => l.excerpt).join('\n')).not.toContain('hunter2')
  })

  it('finds a session cookie with a value and a bearer credential, in any case', () => {
    const leaks = leaksIn('cookie: nuxt-session=Fe26.2**abcdef0123456789\nAuthorization: bearer tst_xyzxyzxyzxyz\nBEARER abcdefgh1234', [])
    expect(leaks.map((l) => l.what)).toEqual(['session cookie', 'bearer credential', 'bearer credential'])
    expect(leaks[0]!.excerpt).toBe('cookie: nuxt-session=<secret>')
  })

  it('leaves alone an emptied session cookie and the wording of the 401 that names the header', () => {
    const text = 'set-cookie: nuxt-session=; Path=/; HttpOnly\nThe Authorization header must be "Bearer <station token>".\n'
    expect(leaksIn(text, secrets)).toEqual([])
  })
})
