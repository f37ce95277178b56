// The lot dashboard in headless Chromium for the dashboard bench: a signed-in engineer opens /lots/<code>; timed
// until the capability table shows rows and until the selected parameter's histogram and individuals chart have
// drawn their series. Median of a few loads after one warm-up, each left to settle for 1.5 s before the next; a load
// that has not drawn within the cap counts null.
import { performance } from 'node:perf_hooks'
import { chromium } from 'playwright-core'
import signIns from '../../fixtures/demo-sign-ins.json'

export type PageFigure = { page: 'lot dashboard'; summaryMs: number | null; chartsMs: number | null; measurements: number; loads: number; error?: string }

const CAP_MS = 120_000
const LOADS = 3
const SETTLE_MS = 1_500

const SUMMARY_DRAWN = () => !!document.querySelector('table[aria-label="Parameters"] tbody tr td')
// a series path with a drawn outline inside the plot of both charts: apexcharts writes `d` once the data are laid
// out, and a series laid out on a wrong axis would have one too, off the plot
const CHARTS_DRAWN = () => ['histogram-chart', 'individuals-chart'].every((t) => {
  const plot = document.querySelector(`[data-test="${t}"] .apexcharts-grid`)?.getBoundingClientRect()
  return !!plot && [...document.querySelectorAll(`[data-test="${t}"] .apexcharts-series path`)].some((p) => {
    const r = p.getBoundingClientRect()
    return (p.getAttribute('d') ?? '').length > 20 && r.right > plot.left && r.left < plot.right && r.width > plot.width / 4
  })
})

const median = (xs: number[]) => { const s = [...xs].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]! }

export async function timeLotPage(baseUrl: string, code: string, measurements: () => Promise<number>): Promise<PageFigure> {
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium', headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'],
  })
  const errors: string[] = []
  try {
    const page = await (await browser.newContext({ viewport: { width: 1400, height: 1000 } })).newPage()
    page.on('pageerror', (e) => errors.push(e.message))
    await page.goto(`${baseUrl}/login`)
    await page.getByLabel('E-mail').fill('engineer@tercet.test')
    await page.getByLabel('Password').fill(signIns.password)
    await page.getByRole('button', { name: 'Sign in' }).click()
    await page.waitForURL((u) => !u.pathname.startsWith('/login'))

    const load = async (): Promise<{ summary: number | null; charts: number | null }> => {
      const t0 = performance.now()
      const until = () => Math.max(1, CAP_MS - (performance.now() - t0))
      await page.goto(`${baseUrl}/lots/${encodeURIComponent(code)}`, { waitUntil: 'commit', timeout: CAP_MS })
      let summary: number | null = null
      let charts: number | null = null
      try {
        await page.waitForFunction(SUMMARY_DRAWN, undefined, { timeout: until(), polling: 25 })
        summary = performance.now() - t0
        await page.waitForFunction(CHARTS_DRAWN, undefined, { timeout: until(), polling: 25 })
        charts = performance.now() - t0
      } catch (e) {
        if (!(e as Error).message.includes('Timeout')) throw e
      }
      // the page finishes what it draws after the timed charts (EWMA, failure Pareto) before the next load leaves it,
      // so no load is charged with the one before
      await page.waitForTimeout(SETTLE_MS)
      return { summary, charts }
    }

    const warm = await load()
    const got: { summary: number | null; charts: number | null }[] = []
    // a page that did not draw within the cap once is not asked three more times
    if (warm.charts !== null) for (let i = 0; i < LOADS; i++) got.push(await load())
    const fig = (k: 'summary' | 'charts') => {
      const xs = got.map((g) => g[k])
      return xs.length && xs.every((x) => x !== null) ? +median(xs as number[]).toFixed(0) : null
    }
    const summaryMs = got.length ? fig('summary') : warm.summary === null ? null : +warm.summary.toFixed(0)
    return {
      page: 'lot dashboard', summaryMs, chartsMs: got.length ? fig('charts') : null, measurements: await measurements(), loads: got.length || 1,
      ...(errors.length ? { error: errors.slice(0, 3).join(' | ') } : {}),
    }
  } catch (e) {
    return { page: 'lot dashboard', summaryMs: null, chartsMs: null, measurements: await measurements(), loads: 0, error: [(e as Error).message, ...errors].join(' | ').slice(0, 500) }
  } finally {
    await browser.close()
  }
}
