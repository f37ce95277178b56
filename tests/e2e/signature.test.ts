// Approving a revision, releasing a lot or a shipment, revoking or reissuing a certificate, sending calibration impact
// notices: signed by the password again, or by a sign-in within the window.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { startSecondServer } from '../support/second-server'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`
const email = `signer-${tag}@tercet.test`
const PASSWORD = 'a long signing password'
let cookie = ''
let second: { url: string; stop: () => void } | undefined

async function at(url: string, method: string, path: string, body: unknown, cookieHeader: string, address: string) {
  const r = await fetch(url + path, { method, headers: { 'content-type': 'application/json', cookie: cookieHeader, 'x-forwarded-for': address }, body: JSON.stringify(body) })
  return { status: r.status, body: await r.json() }
}

beforeAll(async () => {
  const admin = await signIn(ROLE_ACCOUNTS.admin)
  const created = await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Signing Tester', role: 'quality', password: PASSWORD } })
  expect(created.status).toBe(201)
  cookie = await signIn(email, PASSWORD)
  second = await startSecondServer({ TERCET_SIGN_WINDOW_S: '1' })
}, 60_000)

afterAll(() => second?.stop())

describe('signing again', () => {
  it('a fresh sign-in signs; a wrong password is refused at /password and counts toward the sign-in limit', async () => {
    const address = `10.250.${process.pid & 255}.9`
    // signed by the recent sign-in: the request reaches the shipment lookup
    expect((await at(baseUrl(), 'POST', '/api/shipments/999999/release', {}, cookie, address)).status).toBe(404)
    expect((await at(baseUrl(), 'POST', '/api/shipments/999999/release', { password: PASSWORD }, cookie, address)).status).toBe(404)
    for (let i = 0; i < 5; i++) {
      const wrong = await at(baseUrl(), 'POST', '/api/revisions/999999/approve', { password: 'not the password' }, cookie, address)
      expect(wrong.status).toBe(422)
      expect(wrong.body.errors).toEqual([{ pointer: '/password', message: 'not correct' }])
    }
    const limited = await at(baseUrl(), 'POST', '/api/lots/NO-SUCH-LOT/release', { password: PASSWORD }, cookie, address)
    expect(limited.status).toBe(429)
  })

  it('outside the signing window an action without the password is refused; with it, it goes through', async () => {
    const fresh = await signIn(ROLE_ACCOUNTS.quality)
    await new Promise((r) => setTimeout(r, 1500))
    const address = `10.251.${process.pid & 255}.9`
    const refused = await at(second!.url, 'POST', '/api/shipments/999999/release', {}, fresh, address)
    expect(refused.status).toBe(422)
    expect(refused.body).toMatchObject({ signature: 'required', errors: [{ pointer: '/password', message: 'your password is needed to sign' }] })
    for (const path of ['/api/revisions/999999/approve', '/api/lots/NO-SUCH-LOT/release', '/api/certificates/NO-SUCH/reissue', '/api/calibration-impacts/999999/notices']) {
      expect((await at(second!.url, 'POST', path, {}, fresh, address)).status).toBe(422)
    }
    expect((await at(second!.url, 'POST', '/api/certificates/NO-SUCH/revoke', { reason: 'Wrong unit' }, fresh, address)).status).toBe(422)
    const demo = (await import('../../fixtures/demo-sign-ins.json')).default.password
    expect((await at(second!.url, 'POST', '/api/shipments/999999/release', { password: demo }, fresh, address)).status).toBe(404)
  })
})
