import type { H3Event } from 'h3'

/** The caller's address; X-Forwarded-For is believed only when a reverse proxy is declared. */
export function clientAddress(event: H3Event): string {
  if (process.env.TERCET_TRUST_PROXY === '1') {
    const xff = getHeader(event, 'x-forwarded-for')
    if (xff) return xff.split(',')[0]!.trim()
  }
  return event.node.req.socket.remoteAddress ?? 'unknown'
}
