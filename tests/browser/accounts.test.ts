import type { Knex } from 'knex'
import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, freshAddress, signIn } from '../support/http'
import { attemptSignIn } from '../support/accounts'
import { hydrated, launchBrowser, shot } from '../support/browser'

let browser: Browser
let db: Knex
beforeAll(async () => {
  browser = await launchBrowser()
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
})
afterAll(async () => {
  await browser?.close()
  await db?.destroy()
})

async function linkFor(email: string): Promise<string> {
  const rows = await db('mail_outbox').where('template', 'passwordReset').orderBy('id', 'desc')
  const row = rows.find((r) => (typeof r.to === 'string' ? JSON.parse(r.to) : r.to).includes(email))
  return /(\/reset-password\/[A-Za-z0-9_-]+)/.exec(row.text)![1]!
}

describe('setting a forgotten password in the browser', () => {
  it('asks for a link from the sign-in page, sets a new password through it, signs in with it, and the link then refuses', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `browser-reset-${Date.now()}@tercet.test`
    expect((await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Browser Reset', role: 'engineer', password: 'forgotten long ago' } })).status).toBe(201)

    const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}/login`)
    await hydrated(page)
    await page.getByRole('link', { name: 'Forgotten your password?' }).click()
    await page.waitForURL(/\/forgot-password$/)
    await hydrated(page)
    await page.getByLabel('E-mail').fill(email)
    await page.getByRole('button', { name: 'Send the link' }).click()
    await expect.poll(() => page.locator('[data-test=reset-sent]').textContent()).toContain('30 minutes')
    await shot(page, 'forgot-password-sent')

    const path = await linkFor(email)
    await page.goto(`${baseUrl()}${path}`)
    await hydrated(page)
    await page.getByLabel('New password', { exact: true }).fill('short')
    await expect.poll(() => page.locator('[data-test=new-password-error]').textContent()).toContain('at least 12')
    await page.getByLabel('New password', { exact: true }).fill('chosen in the browser')
    await page.getByLabel('New password again').fill('chosen in the browser')
    await page.getByRole('button', { name: 'Set password' }).click()
    await expect.poll(() => page.locator('[data-test=reset-done]').textContent()).toContain('new password is set')
    await shot(page, 'reset-password-done')

    await page.getByRole('link', { name: 'Sign in' }).click()
    await page.waitForURL(/\/login/)
    await hydrated(page)
    await page.getByLabel('E-mail').fill(email)
    await page.getByLabel('Password').fill('chosen in the browser')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL((u) => !u.pathname.startsWith('/login'))
    expect(new URL(page.url()).pathname).toBe('/lots')

    const again = await (await browser.newContext({ extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })).newPage()
    await again.goto(`${baseUrl()}${path}`)
    await hydrated(again)
    await again.getByLabel('New password', { exact: true }).fill('a second try at it')
    await again.getByLabel('New password again').fill('a second try at it')
    await again.getByRole('button', { name: 'Set password' }).click()
    await expect.poll(() => again.locator('[data-test=link-refused]').textContent()).toContain('not valid')
    await shot(again, 'reset-password-reused')
    await context.close()
  })

  it('refuses a link whose 30 minutes have passed, and the old password still signs in', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `browser-expired-${Date.now()}@tercet.test`
    expect((await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Browser Expired', role: 'engineer', password: 'remembered after all' } })).status).toBe(201)
    expect((await call('POST', '/api/auth/password-reset', { body: { email }, headers: { 'x-forwarded-for': freshAddress() } })).status).toBe(202)
    const path = await linkFor(email)
    const user = await db('users').where({ email }).first('id')
    // the link was asked for 31 minutes ago
    await db('password_resets').where({ user_id: user.id }).update({ created_at: db.raw('NOW(3) - INTERVAL 31 MINUTE'), expires_at: db.raw('NOW(3) - INTERVAL 1 MINUTE') })

    const context = await browser.newContext({ extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}${path}`)
    await hydrated(page)
    await page.getByLabel('New password', { exact: true }).fill('too late for this one')
    await page.getByLabel('New password again').fill('too late for this one')
    await page.getByRole('button', { name: 'Set password' }).click()
    await expect.poll(() => page.locator('[data-test=link-refused]').textContent()).toContain('not valid')
    await shot(page, 'reset-password-expired')
    await context.close()
    expect((await attemptSignIn(email, 'too late for this one')).status).toBe(401)
    expect((await attemptSignIn(email, 'remembered after all')).status).toBe(200)
  })

  it('changes the signed-in user\'s password on the account page reached from the header', async () => {
    const admin = await signIn('admin@tercet.test')
    const email = `browser-change-${Date.now()}@tercet.test`
    expect((await call('POST', '/api/users', { cookie: admin, body: { email, name: 'Browser Change', role: 'operator', password: 'the first phrase here' } })).status).toBe(201)
    const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
    const page = await context.newPage()
    await page.goto(`${baseUrl()}/login`)
    await hydrated(page)
    await page.getByLabel('E-mail').fill(email)
    await page.getByLabel('Password').fill('the first phrase here')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL((u) => !u.pathname.startsWith('/login'))
    await hydrated(page)
    await page.locator('[data-test=account-link]').click()
    await page.waitForURL(/\/account$/)
    await hydrated(page)
    await page.getByLabel('Current password').fill('not the first phrase')
    await page.getByLabel('New password', { exact: true }).fill('the second phrase here')
    await page.getByLabel('New password again').fill('the second phrase here')
    await page.getByRole('button', { name: 'Change password' }).click()
    await expect.poll(() => page.locator('[data-test=password-change]').textContent()).toContain('not correct')
    await page.getByLabel('Current password').fill('the first phrase here')
    await page.getByRole('button', { name: 'Change password' }).click()
    await expect.poll(() => page.locator('[data-test=changed]').textContent()).toContain('password is changed')
    await shot(page, 'account-password-changed')
    const login = await attemptSignIn(email, 'the second phrase here')
    expect(login.status).toBe(200)

    // the session that changed the password lives on (its cookie carries the new session version)
    await page.reload()
    await hydrated(page)
    await expect.poll(() => page.locator('body').textContent()).toContain(email)
    expect(new URL(page.url()).pathname).toBe('/account')
    // signing out everywhere ends it too and leaves for the sign-in page
    await page.getByLabel('Your password').fill('the second phrase here')
    await shot(page, 'account-sign-out-everywhere')
    await page.getByRole('button', { name: 'Sign out everywhere' }).click()
    await page.waitForURL(/\/login/)
    const me = await page.request.get(`${baseUrl()}/api/me`)
    expect(me.status()).toBe(401)
    await context.close()
  })
})
