import { renderPending } from '../services/certificates/render-job'
import { repeatEvery } from '../utils/repeating-task'

// Renders issued certificates into their stored documents soon after issue, so downloads find them ready; a
// download that comes first renders on demand under the same lease. TERCET_CERT_RENDERER=off leaves every render to
// the downloads (benchmarks and tests of the on-demand path).
export default defineNitroPlugin((nitro) => {
  if (process.env.TERCET_CERT_RENDERER === 'off') return
  repeatEvery(nitro, 1000, 'rendering certificates', async () => {
    const fonts = await certificateFonts()
    // a tick renders at most a few hundred, so a large issue never holds the task for long
    for (let i = 0; i < 40; i++) if ((await renderPending(useDb(), fonts)) === 0) break
  })
})
