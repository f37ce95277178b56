// Same scrypt driver and defaults as nuxt-auth-utils' hashPassword, for code that runs outside the server (seeds, tests).
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'

const hasher = new Hash(new Scrypt({}))

export function hashPasswordOffline(plain: string): Promise<string> {
  return hasher.make(plain)
}

export function verifyPasswordOffline(hash: string, plain: string): Promise<boolean> {
  return hasher.verify(hash, plain)
}
