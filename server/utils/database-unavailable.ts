// Whether an error means the database is away or too busy to answer now (a retry later may succeed), as opposed to a
// fault of the request or of the code. The API answers these 503 with Retry-After; background jobs stop their pass.

/** Socket, driver and server codes of a connection that could not be made, was cut, or a server going down or full. */
const UNAVAILABLE_CODES = new Set([
  // the socket: refused, reset, written after the peer closed, timed out, no route
  'ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'ECONNABORTED', 'EHOSTUNREACH', 'ENETUNREACH', 'EAI_AGAIN',
  // mysql2: the connection ended under a command, a command sent on a dead connection, a handshake or query timed out
  'PROTOCOL_CONNECTION_LOST', 'PROTOCOL_SEQUENCE_TIMEOUT', 'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR', 'PROTOCOL_ENQUEUE_AFTER_QUIT',
  'PROTOCOL_ENQUEUE_AFTER_DESTROY',
  // the server: going down, the connection killed, too many connections, busy rows
  'ER_SERVER_SHUTDOWN', 'ER_NORMAL_SHUTDOWN', 'ER_SHUTDOWN_COMPLETE', 'ER_CONNECTION_KILLED', 'ER_QUERY_INTERRUPTED',
  'ER_CON_COUNT_ERROR', 'ER_TOO_MANY_USER_CONNECTIONS', 'ER_LOCK_WAIT_TIMEOUT', 'ER_LOCK_DEADLOCK',
  'CR_SERVER_GONE_ERROR', 'CR_SERVER_LOST', 'CR_CONNECTION_ERROR', 'CR_CONN_HOST_ERROR',
  // a Galera node not (or no longer) part of the primary component: "WSREP has not yet prepared node for application use"
  'ER_UNKNOWN_COM_ERROR',
])

/** The same by server error number, for errors that carry only `errno` (MariaDB 1927 is "connection killed"). */
const UNAVAILABLE_ERRNOS = new Set([1040, 1047, 1053, 1077, 1079, 1080, 1203, 1205, 1213, 1317, 1927, 2002, 2003, 2006, 2013, 2055])

/** Messages of the driver and the pool that come without a code. */
const UNAVAILABLE_MESSAGES = [
  /Connection lost: The server closed the connection/i,
  /Can't add new command when connection is in closed state/i,
  /Timeout acquiring a connection/i, // knex: the pool is full or every connection attempt failed
  /connection is in closed state/i,
  /This socket has been ended by the other party/i,
  /Pool is closed/i,
  /read ECONNRESET|write EPIPE|connect ECONNREFUSED/i,
  /WSREP has not yet prepared node for application use/i,
]

type ErrorLike = { code?: unknown; errno?: unknown; message?: unknown; name?: unknown; fatal?: unknown; cause?: unknown; errors?: unknown; originalError?: unknown; sqlMessage?: unknown }

function oneIsUnavailable(e: ErrorLike): boolean {
  if (typeof e.code === 'string' && UNAVAILABLE_CODES.has(e.code)) return true
  if (typeof e.errno === 'number' && UNAVAILABLE_ERRNOS.has(e.errno) && (e.code === undefined || typeof e.code === 'string')) return true
  // knex's timeout waiting for the pool
  if (e.name === 'KnexTimeoutError') return true
  // mysql2 marks errors that end the connection fatal: whatever the statement was, the connection is gone
  if (e.fatal === true) return true
  const message = typeof e.message === 'string' ? e.message : typeof e.sqlMessage === 'string' ? e.sqlMessage : ''
  return UNAVAILABLE_MESSAGES.some((m) => m.test(message))
}

/**
 * True when the error, or any error it wraps (h3's and knex's `cause`, an AggregateError's `errors`, a wrapper's
 * `originalError`), says the database could not be reached, the connection was cut, or the server is full or busy.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  const seen = new Set<unknown>()
  const stack: unknown[] = [error]
  while (stack.length) {
    const e = stack.pop()
    if (!e || typeof e !== 'object' || seen.has(e) || seen.size > 32) continue
    seen.add(e)
    const x = e as ErrorLike
    if (oneIsUnavailable(x)) return true
    if (x.cause) stack.push(x.cause)
    if (x.originalError) stack.push(x.originalError)
    if (Array.isArray(x.errors)) stack.push(...x.errors)
  }
  return false
}
