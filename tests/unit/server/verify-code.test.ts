import { describe, expect, it } from 'vitest'
import { CODE_ALPHABET, encodeCodeBytes, newVerifyCode, normaliseVerifyCode } from '../../../server/services/certificates/verify-code'

describe('verification codes', () => {
  it('use 32 symbols none of which can be taken for another (no 0, O, 1, I)', () => {
    expect(new Set(CODE_ALPHABET).size).toBe(32)
    for (const c of '01OI') expect(CODE_ALPHABET).not.toContain(c)
  })

  it('write 128 bits as 26 base-32 symbols: 0 is all "2", and 2^128 − 1 is 7 followed by twenty-five 31s', () => {
    expect(encodeCodeBytes(new Uint8Array(16))).toBe('2'.repeat(26))
    // 2^128 − 1 = 7·32^25 + (32^25 − 1)
    expect(encodeCodeBytes(new Uint8Array(16).fill(255))).toBe(CODE_ALPHABET[7] + CODE_ALPHABET[31]!.repeat(25))
    // 2^120 is 1 followed by 120 zero bits: 32^24 = 2^120, so the 25th symbol from the right is 1
    const b = new Uint8Array(16); b[0] = 1
    expect(encodeCodeBytes(b)).toBe('2' + CODE_ALPHABET[1] + '2'.repeat(24))
  })

  it('are grouped in fours, differ each time and read back however they are typed', () => {
    const codes = Array.from({ length: 2000 }, newVerifyCode)
    expect(new Set(codes).size).toBe(codes.length)
    for (const c of codes.slice(0, 50)) {
      expect(c).toMatch(/^([2-9A-HJ-NP-Z]{4}-){6}[2-9A-HJ-NP-Z]{2}$/)
      expect(normaliseVerifyCode(c.toLowerCase())).toBe(c)
      expect(normaliseVerifyCode(` ${c.replace(/-/g, ' ')} `)).toBe(c)
    }
  })

  it('refuse what cannot be a code: wrong length, ambiguous symbols, more than 128 bits', () => {
    const c = newVerifyCode()
    expect(normaliseVerifyCode(c.slice(0, -1))).toBeNull()
    expect(normaliseVerifyCode(c.replace(/.$/, '0'))).toBeNull()
    expect(normaliseVerifyCode('A' + c.slice(1))).toBeNull()
    expect(normaliseVerifyCode('x'.repeat(100))).toBeNull()
  })
})
