import { mkdirSync } from 'node:fs'
import { resolve } from 'node:path'
import { afterEach, expect } from 'vitest'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { DEMO_PASSWORD, freshAddress } from './http'

export const ARTIFACTS = resolve(process.cwd(), 'tests/artifacts')

// Every page a browser test opens reports what the Content-Security-Policy refused, both as Chromium's console
// error and as the page's securitypolicyviolation event; each test ends by asserting there was none.
const CSP_MARK = '[csp-violation]'
const cspViolations: string[] = []

afterEach(() => {
  const found = cspViolations.splice(0)
  expect(found, 'Content-Security-Policy violations').toEqual([])
})

function watchPage(page: Page): void {
  page.on('console', (m) => {
    const text = m.text()
    if (m.type() === 'error' && (text.includes('Content Security Policy') || text.startsWith(CSP_MARK))) cspViolations.push(`${page.url()} ${text}`)
  })
}

async function watchContext(context: BrowserContext): Promise<BrowserContext> {
  context.on('page', watchPage)
  await context.addInitScript((mark: string) => {
    document.addEventListener('securitypolicyviolation', (e) => {
      console.error(`${mark} ${e.effectiveDirective} refused ${e.blockedURI || 'inline'} at ${e.sourceFile}:${e.lineNumber} ${e.sample}`)
    }, true)
  }, CSP_MARK)
  return context
}

export async function launchBrowser(): Promise<Browser> {
  mkdirSync(ARTIFACTS, { recursive: true })
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
    headless: true,
    args: ['--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-quic', '--no-first-run', '--disable-component-update', '--disable-sync'],
  })
  const newContext = browser.newContext.bind(browser)
  browser.newContext = async (options) => watchContext(await newContext(options))
  const newPage = browser.newPage.bind(browser)
  browser.newPage = async (options) => {
    const page = await newPage(options)
    await watchContext(page.context())
    watchPage(page)
    return page
  }
  return browser
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
