// A connection borrowed from the one Knex pool and spoken to through the driver directly, for the hottest
// write path: several statements go in one round trip, without the query builder's second pass over the values.
import type { Knex } from 'knex'
import mysql from 'mysql2'

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


// keeps each round trip well under max_allowed_packet (16 MiB by default)
const ROUND_TRIP_BYTES = 4 * 1024 * 1024

function roughBytes(s: Statement | string): number {
  if (typeof s === 'string') return s.length
  let n = s.sql.length
  for (const v of s.values) n += typeof v === 'string' ? v.length + 2 : 24
  return n
}

/**
 * Sends the statements in order, as few round trips as the size allows, and gives back each statement's result
 * (a statement's rows, or its OK packet). The server stops at the first statement that fails.
 */
export async function sendStatements(send: SendStatements, statements: (Statement | string)[]): Promise<unknown[]> {
  const results: unknown[] = []
  let group: (Statement | string)[] = []
  let bytes = 0
  const flush = async () => {
    if (!group.length) return
    // each statement takes its values on its own, so the literal texts beside them are never read for placeholders
    const sql = group.map((s) => (typeof s === 'string' ? s : s.values.length ? mysql.format(s.sql, s.values as any, false, 'Z') : s.sql)).join(';\n')
    const r = await send(sql)
    if (group.length === 1) results.push(r)
    else for (const x of r as unknown[]) results.push(x)
    group = []
    bytes = 0
  }
  for (const s of statements) {
    const b = roughBytes(s)
    if (group.length && bytes + b > ROUND_TRIP_BYTES) await flush()
    group.push(s)
    bytes += b
  }
  await flush()
  return results
}
