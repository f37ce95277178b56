// Public verification codes: 128 random bits written in 32 symbols that cannot be mistaken for one another when read
// aloud or typed from paper (no 0/O, no 1/I), in groups of four.
import { randomBytes } from 'node:crypto'

export const CODE_ALPHABET = '23456789ABCDEFGHJKLMNPQRSTUVWXYZ'
/** 128 bits need 26 symbols of 5 bits (130 bits; the top two are always zero). */
export const CODE_SYMBOLS = 26

/** The 26 symbols of 16 bytes, most significant first (the 130 bits read with two zero bits in front). */
export function encodeCodeBytes(bytes: Uint8Array): string {
  let out = ''
  let acc = 0
  let bits = 2
  for (const b of bytes) {
    acc = (acc << 8) | b
    bits += 8
    while (bits >= 5) {
      bits -= 5
      out += CODE_ALPHABET[(acc >> bits) & 31]
    }
    acc &= (1 << bits) - 1
  }
  return out
}

function group(symbols: string): string {
  return symbols.match(/.{1,4}/g)!.join('-')
}

export function newVerifyCode(): string {
  return group(encodeCodeBytes(randomBytes(16)))
}

/** The stored form of a code as someone typed it (any case, with or without dashes and spaces); null when it cannot be one. */
export function normaliseVerifyCode(input: string): string | null {
  if (typeof input !== 'string' || input.length > 64) return null
  const symbols = input.toUpperCase().replace(/[\s-]/g, '')
  if (symbols.length !== CODE_SYMBOLS) return null
  for (const c of symbols) if (!CODE_ALPHABET.includes(c)) return null
  // the first symbol carries only the top three of the 130 bits, and the top two are zero
  if (CODE_ALPHABET.indexOf(symbols[0]!) > 7) return null
  return group(symbols)
}
