import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { passwordProblem, PASSWORD_MIN_LENGTH } from '../../../shared/utils/password-rule'
import { COMMON_PASSWORDS } from '../../../shared/utils/common-passwords'

// NIST SP 800-63B §5.1.1.2: a minimum length and a check against a list of commonly used passwords, with no
// composition rules; Tercet's minimum is 12 characters.
describe('password rule', () => {
  it('refuses fewer than 12 characters and accepts 12', () => {
    expect(PASSWORD_MIN_LENGTH).toBe(12)
    expect(passwordProblem('quartz-lamp')).toMatch(/at least 12 characters/) // 11
    expect(passwordProblem('quartz-lamps')).toBeNull() // 12
    expect(passwordProblem('')).toMatch(/at least 12/)
  })

  it('counts characters, not UTF-16 units or bytes', () => {
    // 11 astral characters are 22 UTF-16 units but still too short
    expect(passwordProblem('𝄞'.repeat(11))).toMatch(/at least 12/)
    expect(passwordProblem('ämöäüßéèçñåø')).toBeNull() // 12 letters, more than 12 bytes in UTF-8
  })

  it('refuses every listed common password in any case', () => {
    expect(COMMON_PASSWORDS.length).toBeGreaterThan(50)
    for (const p of COMMON_PASSWORDS) {
      expect(p.length, p).toBeGreaterThanOrEqual(PASSWORD_MIN_LENGTH) // shorter ones fail on length already
      expect(passwordProblem(p), p).toMatch(/most common/)
      expect(passwordProblem(p.toUpperCase()), p).toMatch(/most common/)
    }
    expect(passwordProblem('Password1234')).toMatch(/most common/)
    expect(passwordProblem('QWERTY123456')).toMatch(/most common/)
  })

  it("refuses the owner's e-mail address, its local part and the name", () => {
    const owner = { email: 'Marguerite.Oakhill@vellmar.test', name: 'Marguerite Oakhill' }
    expect(passwordProblem('marguerite.oakhill@vellmar.test', owner)).toMatch(/e-mail address or name/)
    expect(passwordProblem('MARGUERITE.OAKHILL', owner)).toMatch(/e-mail address or name/)
    expect(passwordProblem('Marguerite Oakhill', owner)).toMatch(/e-mail address or name/)
    expect(passwordProblem('margueriteoakhill', owner)).toMatch(/e-mail address or name/)
    expect(passwordProblem('Marguerite Oakhill, tuned at 10 MHz', owner)).toBeNull()
    expect(passwordProblem('marguerite.oakhill@vellmar.test')).toBeNull() // nobody's address without an owner
  })

  it('lets the demo password through', () => {
    const demo = JSON.parse(readFileSync(new URL('../../../fixtures/demo-sign-ins.json', import.meta.url), 'utf8'))
    for (const email of demo.accounts) expect(passwordProblem(demo.password, { email, name: 'Demo' }), email).toBeNull()
  })
})
