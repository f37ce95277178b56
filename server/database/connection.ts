import knex, { type Knex } from 'knex'
import mysql from 'mysql2'

export type DbConnection = { host: string; port: number; user: string; password: string; database: string }

const CONNECTION_NOISE = /^(Acquire connection error|Connection Error):/

/** One pool per process; UTC throughout, DATETIME(3) read back as Date. */
export function createKnex(conn: DbConnection, pool = { min: 0, max: 20 }): Knex {
  return knex({
    client: 'mysql2',
    connection: {
      ...conn,
      timezone: 'Z',
      dateStrings: false,
      supportBigNumbers: true,
      bigNumberStrings: false,
      charset: 'utf8mb4',
      // the single-run writer sends a transaction's statements in one round trip; values travel as placeholder
      // bindings, except a run's own columns in its measurement insert, which are checked integers or escaped by the driver
      multipleStatements: true,
      // the driver would read a statement's whole text for placeholders even with no values to put in; the write path
      // sends long texts of literals (values already in place), so a statement without values goes as it is
      // (dates in UTC, as the connection's time zone says)
      queryFormat: (sql: string, values: any) => (values == null || (Array.isArray(values) && values.length === 0) ? sql : mysql.format(sql, values, false, 'Z')),
    },
    pool: {
      ...pool,
      afterCreate: (c: any, done: (err: Error | null, c: unknown) => void) => {
        // READ COMMITTED: no gap locks, so concurrent first attempts of new units do not deadlock
        c.query("SET time_zone = '+00:00', SESSION tx_isolation = 'READ-COMMITTED'", (err: Error | null) => done(err, c))
      },
    },
    acquireConnectionTimeout: 10_000,
    log: {
      // knex prints each failed connection attempt with its stack; the error also reaches whoever asked for the
      // connection, and the server's fault log reports an outage once when it starts and once when it ends
      warn: (message: string) => { if (!CONNECTION_NOISE.test(String(message))) console.warn(message) },
    },
  })
}

export function connectionFromEnv(env: NodeJS.ProcessEnv = process.env): DbConnection {
  return {
    host: env.NUXT_DB_HOST || '127.0.0.1',
    port: Number(env.NUXT_DB_PORT || env.TERCET_DB_PORT || 3307),
    user: env.NUXT_DB_USER || 'tercet',
    password: env.NUXT_DB_PASSWORD || '',
    database: env.NUXT_DB_DATABASE || 'tercet',
  }
}
