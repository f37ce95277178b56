import { mkdirSync } from 'node:fs'
import { resolve } from 'node:path'
import { chromium, type Browser, type Page } from 'playwright-core'
import { DEMO_PASSWORD, freshAddress } from './http'

export const ARTIFACTS = resolve(process.cwd(), 'tests/artifacts')

export async function launchBrowser(): Promise<Browser> {
  mkdirSync(ARTIFACTS, { recursive: true })
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-quic', '--no-first-run', '--disable-component-update', '--disable-sync'],
  })
}

/** Signs in through the form, as a person would. */
export async function signInPage(browser: Browser, baseUrl: string, email: string, viewport = { width: 1280, height: 800 }): Promise<Page> {
  const context = await browser.newContext({ viewport, extraHTTPHeaders: { 'x-forwarded-for': freshAddress() } })
  const page = await context.newPage()
  await page.goto(`${baseUrl}/login`)
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(DEMO_PASSWORD)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL((u) => !u.pathname.startsWith('/login'))
  return page
}

export function shot(page: Page, name: string) {
  return page.screenshot({ path: resolve(ARTIFACTS, `${name}.png`), fullPage: true })
}

/** Waits until the page's Vue app is mounted: a click before that lands on server-rendered HTML that nothing listens to. */
export async function hydrated(page: Page): Promise<void> {
  await page.waitForFunction(() => !!(document.querySelector('#__nuxt') as { __vue_app__?: unknown } | null)?.__vue_app__, undefined, { timeout: 30_000 })
}
