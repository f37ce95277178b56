import type { NitroErrorHandler } from 'nitropack'
import { getRequestURL, setResponseHeader, setResponseStatus, send } from 'h3'
import { databaseFaults } from './utils/database-faults'
import { problemTitle } from './utils/problem'
import { RetryLater, RuleError } from './services/rule-error'

/** h3 wraps an error a handler throws that is not its own; the service's error is then its cause. */
function domainError(error: any): RuleError | RetryLater | undefined {
  for (const e of [error, error?.cause]) if (e instanceof RuleError || e instanceof RetryLater) return e
  return undefined
}

function classify(error: any): { status: number; detail: string; data: Record<string, unknown> } {
  const domain = domainError(error)
  if (domain instanceof RuleError) {
    return { status: domain.status, detail: domain.message, data: { ...(domain.errors.length ? { errors: domain.errors } : {}), ...domain.extra } }
  }
  if (domain instanceof RetryLater) return { status: 503, detail: domain.message, data: { headers: { 'Retry-After': String(domain.retryAfterS) } } }
  const cause = error?.cause ?? error
  const code = cause?.code ?? error?.code
  if (code === 'ER_DUP_ENTRY') return { status: 409, detail: 'A record with the same key already exists.', data: {} }
  if (databaseFaults.fault('request', error)) {
    return { status: 503, detail: 'The database is unavailable; retry later.', data: { headers: { 'Retry-After': '5' } } }
  }
  const status = Number(error?.statusCode ?? error?.status ?? 500)
  if (status >= 500 && !error?.data) return { status: 500, detail: 'An unexpected error occurred.', data: {} }
  const detail = status === 404 && !error?.message ? 'No such resource.' : String(error?.message || error?.statusMessage || problemTitle(status))
  return { status, detail, data: (error?.data && typeof error.data === 'object') ? error.data : {} }
}

/** API errors become RFC 9457 problem+json; page errors fall through to Nuxt's own handler. */
const handler: NitroErrorHandler = async (error, event) => {
  const url = getRequestURL(event)
  if (!url.pathname.startsWith('/api/')) {
    // a page that met the database away: Nuxt renders app/error.vue with 503 and the browser may try again
    if (databaseFaults.fault('request', error)) {
      Object.assign(error, { statusCode: 503, statusMessage: problemTitle(503) })
      setResponseHeader(event, 'Retry-After', 5)
    }
    return
  }
  const { status, detail, data } = classify(error)
  if (status === 500) console.error(error)
  const { headers, ...rest } = data as { headers?: Record<string, string> }
  for (const [k, v] of Object.entries(headers ?? {})) setResponseHeader(event, k, v)
  setResponseStatus(event, status, problemTitle(status))
  setResponseHeader(event, 'Content-Type', 'application/problem+json')
  setResponseHeader(event, 'Cache-Control', 'no-store')
  const body = { type: status === 500 ? 'about:blank' : `https://tercet.invalid/problems/${status}`, title: problemTitle(status), status, detail, ...rest }
  await send(event, JSON.stringify(body))
}

export default handler
