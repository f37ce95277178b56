// Whether an error means the database is away or too busy to answer now (a retry later may succeed), as opposed to a
// fault of the request or of the code. The API answers these 503 with Retry-After; background jobs stop their pass.
const UNAVAILABLE = new Set(['ECONNREFUSED', 'PROTOCOL_CONNECTION_LOST', 'ER_CON_COUNT_ERROR', 'ETIMEDOUT', 'ER_LOCK_WAIT_TIMEOUT', 'ER_LOCK_DEADLOCK'])

export function isDatabaseUnavailable(error: unknown): boolean {
  const e = error as { code?: unknown; message?: unknown; cause?: { code?: unknown; message?: unknown } } | null
  const code = e?.cause?.code ?? e?.code
  return (typeof code === 'string' && UNAVAILABLE.has(code)) || /Timeout acquiring a connection/.test(String(e?.cause?.message ?? e?.message ?? ''))
}
