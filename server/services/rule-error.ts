import type { FieldError } from '../../shared/types/problem'

export type RuleStatus = 400 | 403 | 404 | 409 | 410 | 413 | 415 | 422

/**
 * A domain rule refused the request. Services throw it and nothing else for a refusal; the API's error handler
 * (server/error-handler.ts) is the one place that turns it into problem+json: `status`, the message as `detail`,
 * `errors` (JSON Pointers into the body or /query) when there are any, and `extra` as further members.
 */
export class RuleError extends Error {
  constructor(public status: RuleStatus, message: string, public errors: FieldError[] = [], public extra: Record<string, unknown> = {}) {
    super(message)
    this.name = 'RuleError'
  }
}

/** The work cannot be done right now but will be shortly (a lease held elsewhere, a document being prepared): 503 with Retry-After. */
export class RetryLater extends Error {
  constructor(message: string, public retryAfterS = 2) {
    super(message)
    this.name = 'RetryLater'
  }
}
