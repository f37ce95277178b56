import { createError, type H3Error } from 'h3'
import type { FieldError } from '../../shared/types/problem'

const TITLES: Record<number, string> = {
  400: 'Bad request', 401: 'Sign-in required', 403: 'Not allowed', 404: 'Not found', 409: 'Conflict',
  413: 'Body too large', 415: 'Unsupported media type', 422: 'Cannot be processed', 429: 'Too many attempts',
  500: 'Internal error', 503: 'Service unavailable',
}

/** An RFC 9457 problem, thrown from handlers and rendered as application/problem+json. */
export function problem(status: number, detail: string, extra: { errors?: FieldError[]; headers?: Record<string, string>; [k: string]: unknown } = {}): H3Error {
  return createError({ status, statusMessage: TITLES[status] ?? 'Error', message: detail, data: extra })
}

export function problemTitle(status: number): string {
  return TITLES[status] ?? 'Error'
}
