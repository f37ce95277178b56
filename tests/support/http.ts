import http from 'node:http'
import { inject } from 'vitest'
import signIns from '../../fixtures/demo-sign-ins.json'

export const DEMO_PASSWORD = signIns.password

export function baseUrl(): string {
  return inject('baseUrl')
}

export type Reply = { status: number; headers: Headers; body: any }

let forwardedCounter = 0
/** A distinct client address per caller so sign-in rate limits of one test do not leak into another. */
export function freshAddress(): string {
  forwardedCounter += 1
  return `10.${(process.pid >> 8) & 255}.${process.pid & 255}.${forwardedCounter % 250}`
}

export async function call(method: string, path: string, opts: { body?: unknown; cookie?: string; token?: string; headers?: Record<string, string>; raw?: string } = {}): Promise<Reply> {
  const headers: Record<string, string> = { accept: 'application/json', ...opts.headers }
  if (opts.cookie) headers.cookie = opts.cookie
  if (opts.token) headers.authorization = `Bearer ${opts.token}`
  let body: string | undefined
  if (opts.raw !== undefined) { body = opts.raw; headers['content-type'] ??= 'application/json' }
  else if (opts.body !== undefined) { body = JSON.stringify(opts.body); headers['content-type'] = 'application/json' }
  const r = await fetch(baseUrl() + path, { method, headers, body, redirect: 'manual' })
  const text = await r.text()
  let parsed: any = text
  try { parsed = text ? JSON.parse(text) : null } catch { /* not JSON */ }
  return { status: r.status, headers: r.headers, body: parsed }
}

/** Signs in and returns the session cookie. */
export async function signIn(email: string, password = DEMO_PASSWORD): Promise<string> {
  const r = await fetch(baseUrl() + '/api/auth/login', {
    method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': freshAddress() },
    body: JSON.stringify({ email, password }),
  })
  if (r.status !== 200) throw new Error(`sign-in of ${email} failed: ${r.status} ${await r.text()}`)
  const cookie = r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
  return cookie
}

export const ROLE_ACCOUNTS = {
  admin: 'admin@tercet.test',
  quality: 'quality@tercet.test',
  engineer: 'engineer@tercet.test',
  operator: 'operator@tercet.test',
  customer: 'buyer@quillfeather.test',
} as const

/**
 * Sends a POST declaring `length` bytes but writes only `firstBytes` of them, and returns what the server answers:
 * a limit that holds answers from the declared length, before the body arrives.
 */
export function postDeclaredOnly(path: string, length: number, headers: Record<string, string>, firstBytes: string): Promise<{ status: number; body: any }> {
  return new Promise((done, fail) => {
    const req = http.request(baseUrl() + path, { method: 'POST', headers: { ...headers, 'content-length': String(length), accept: 'application/json' } }, (res) => {
      let text = ''
      res.on('data', (c) => { text += c })
      res.on('end', () => { req.destroy(); done({ status: res.statusCode!, body: JSON.parse(text) }) })
    })
    req.on('error', fail)
    req.write(firstBytes)
  })
}
