import type { FieldError } from '../utils/problem'
import { problem } from '../utils/problem'

/** A domain rule refused the request; handlers turn it into problem+json with the given status. */
export class RuleError extends Error {
  constructor(public status: 400 | 403 | 404 | 409 | 413 | 422, message: string, public errors: FieldError[] = [], public extra: Record<string, unknown> = {}) {
    super(message)
  }
}

/** Runs a service call and rethrows a RuleError as the matching problem. */
export async function underRules<T>(fn: () => Promise<T>): Promise<T> {
  try {
    return await fn()
  } catch (e) {
    if (e instanceof RuleError) throw problem(e.status, e.message, { ...(e.errors.length ? { errors: e.errors } : {}), ...e.extra })
    throw e
  }
}
