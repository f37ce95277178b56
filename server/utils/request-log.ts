// One JSON line per request: method, path, status, milliseconds and request id. Nothing a reader could use to act as
// someone: no headers at all (so no Authorization or cookies), no body, query values of secret-looking names and the
// token of a password-reset link replaced by a mark.
import { randomUUID } from 'node:crypto'

const SECRET_QUERY = /token|password|passwd|secret|signature|session|auth|^(?:key|api[_-]?key|code|otp|sig)$/i
const SECRET_PATHS: [RegExp, string][] = [
  [/^(\/reset-password\/)[^/?#]+/, '$1…'],
  [/^(\/api\/auth\/password-reset\/)(?!confirm(?:$|\/))[^/?#]+/, '$1…'],
]

/** The path to log: the secret part of a reset link replaced, and any query value whose name looks secret. */
export function loggablePath(url: string): string {
  const q = url.indexOf('?')
  let path = q < 0 ? url : url.slice(0, q)
  for (const [re, to] of SECRET_PATHS) path = path.replace(re, to)
  if (q < 0) return path
  const params = new URLSearchParams(url.slice(q + 1))
  const kept: string[] = []
  for (const [k, v] of params) kept.push(`${encodeURIComponent(k)}=${SECRET_QUERY.test(k) ? '…' : encodeURIComponent(v)}`)
  return kept.length ? `${path}?${kept.join('&')}` : path
}

const ID_SHAPE = /^[A-Za-z0-9._:-]{8,64}$/

/** A well-formed id from a proxy in front (X-Request-Id) is kept, so its log and ours line up; else a new one. */
export function requestIdFrom(header: string | string[] | undefined): string {
  const v = Array.isArray(header) ? header[0] : header
  return v && ID_SHAPE.test(v) ? v : randomUUID()
}

export type RequestLine = { method: string; path: string; status: number; ms: number; id: string }

export function requestLogLine(r: { method: string; url: string; status: number; startedAt: number; id: string }, now = performance.now()): RequestLine {
  return { method: r.method, path: loggablePath(r.url), status: r.status, ms: Math.round((now - r.startedAt) * 10) / 10, id: r.id }
}
