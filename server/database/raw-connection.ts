// A connection borrowed from the one Knex pool and spoken to through the driver directly, for the hottest
// write path: several statements go in one round trip, without the query builder's second pass over the values.
import type { Knex } from 'knex'

type DriverConnection = {
  query(options: { sql: string }, values: unknown[] | undefined, done: (err: Error | null, result: unknown) => void): void
  __knex__disposed?: unknown
}

export type SendStatements = (sql: string, values?: unknown[]) => Promise<any>

/**
 * Runs `work` on one pooled connection and gives it back afterwards. A connection whose state is unknown
 * (a failed ROLLBACK) is marked so that the pool drops it instead of lending it again. `connection` can be handed
 * to `db.transaction(scope, { connection })` for a Knex transaction on the same session.
 */
export async function withDriverConnection<T>(db: Knex, work: (send: SendStatements, discard: () => void, connection: unknown) => Promise<T>): Promise<T> {
  const conn = (await db.client.acquireConnection()) as DriverConnection
  const send: SendStatements = (sql, values) => new Promise((done, fail) => {
    conn.query({ sql }, values, (err, result) => (err ? fail(err) : done(result)))
  })
  const discard = () => { conn.__knex__disposed = new Error('connection left in an unknown transaction state') }
  try {
    return await work(send, discard, conn)
  } finally {
    await db.client.releaseConnection(conn)
  }
}

export type Statement = { sql: string; values: unknown[] }

/** Several statements as one text for one round trip; the server stops at the first that fails. */
export function joinStatements(statements: (Statement | string)[]): Statement {
  // plain loops: a run's statements carry several hundred values, and this is on every post
  let sql = ''
  const values: unknown[] = []
  for (let i = 0; i < statements.length; i++) {
    const s = statements[i]!
    if (i) sql += ';\n'
    if (typeof s === 'string') { sql += s; continue }
    sql += s.sql
    for (let k = 0; k < s.values.length; k++) values.push(s.values[k])
  }
  return { sql, values }
}

