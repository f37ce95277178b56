import { servedOverHttps } from '../utils/session'

// Additions to what nuxt-security sends (nuxt.config.ts `security`; DEVELOPERS.md, "Security headers").

const HSTS = 'max-age=31536000'
const NONCE_SLOT = "'nonce-{{nonce}}'"

export default defineNitroPlugin((nitro) => {
  // Strict-Transport-Security only on answers that travel over HTTPS: the app also runs on plain HTTP inside a plant,
  // where the header means nothing, and sibling hosts of the domain are not the app's to bind (no includeSubDomains).
  nitro.hooks.hook('request', (event) => {
    if (servedOverHttps(event)) setResponseHeader(event, 'Strict-Transport-Security', HSTS)
  })
  // nuxt-security fills the request's nonce into the page CSP only when it renders HTML; a page route that redirects
  // instead would carry the placeholder itself
  nitro.hooks.hook('beforeResponse', (event) => {
    const csp = getResponseHeader(event, 'content-security-policy')
    if (typeof csp !== 'string' || !csp.includes(NONCE_SLOT)) return
    const nonce = (event.context.security as { nonce?: string } | undefined)?.nonce
    setResponseHeader(event, 'Content-Security-Policy', nonce ? csp.replaceAll(NONCE_SLOT, `'nonce-${nonce}'`) : csp.replaceAll(` ${NONCE_SLOT}`, ''))
  })
})
