// Write transactions that are run again when the database aborted them for a concurrent writer: an InnoDB deadlock,
// or on a Galera cluster a certification failure (another node committed a conflicting write first), which the client
// sees as the same ER_LOCK_DEADLOCK (1213) at any statement or at COMMIT. The whole transaction runs again from its
// first statement, reading what the other writer committed; every write it makes is decided inside it, and run
// writes are idempotent by their ids, so running it again gives what one clean run would have given.
import type { Knex } from 'knex'

/** Codes after which the transaction was rolled back whole and may simply run again. */
const ALWAYS = new Set(['ER_LOCK_DEADLOCK'])
const ALWAYS_ERRNO = new Set([1213])

export type RetryOptions = {
  /** attempts in all, the first included (default 4) */
  tries?: number
  /** further codes a caller knows to be safe to run again (e.g. ER_DUP_ENTRY for a concurrent insert of the same key) */
  alsoRetry?: readonly string[]
  /** base of the jittered pause before attempt n: a random wait in [base, base · 4n) ms (default 3) */
  baseMs?: number
  /** told of each retry, for tests and logs */
  onRetry?: (error: unknown, attempt: number) => void
}

function codeOf(e: unknown): { code?: string; errno?: number } {
  const x = e as { code?: unknown; errno?: unknown; cause?: unknown } | null
  if (!x || typeof x !== 'object') return {}
  if (typeof x.code === 'string' || typeof x.errno === 'number') return { code: typeof x.code === 'string' ? x.code : undefined, errno: typeof x.errno === 'number' ? x.errno : undefined }
  return x.cause ? codeOf(x.cause) : {}
}

/** Whether the error aborted the whole transaction for a concurrent writer, so running it again may succeed. */
export function isWriteConflict(e: unknown, alsoRetry: readonly string[] = []): boolean {
  const { code, errno } = codeOf(e)
  return (code !== undefined && (ALWAYS.has(code) || alsoRetry.includes(code))) || (errno !== undefined && ALWAYS_ERRNO.has(errno))
}

const pause = (attempt: number, base: number) => new Promise((r) => setTimeout(r, base + Math.random() * base * 4 * attempt))

/**
 * Runs `work` and runs it again, after a short random pause that grows with each attempt, when it failed with a write
 * conflict; any other error, or the last attempt's, goes to the caller (a conflict that persists is answered 503 by
 * the error handler, like a busy database).
 */
export async function withWriteRetries<T>(work: (attempt: number) => Promise<T>, options: RetryOptions = {}): Promise<T> {
  const tries = options.tries ?? 4
  for (let attempt = 1; ; attempt++) {
    try {
      return await work(attempt)
    } catch (e) {
      if (attempt >= tries || !isWriteConflict(e, options.alsoRetry)) throw e
      options.onRetry?.(e, attempt)
      await pause(attempt, options.baseMs ?? 3)
    }
  }
}

/**
 * `db.transaction(scope)` run again on a write conflict. Inside another transaction (db is a transaction) it runs once:
 * a deadlock has rolled back the enclosing transaction, so only its owner can run it again.
 */
export function writeTransaction<T>(db: Knex, scope: (trx: Knex.Transaction) => Promise<T>, options: RetryOptions = {}): Promise<T> {
  if ((db as Knex & { isTransaction?: boolean }).isTransaction) return db.transaction(scope)
  return withWriteRetries(() => db.transaction(scope), options)
}
