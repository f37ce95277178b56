import type { Knex } from 'knex'

/**
 * The statement as a read that sees every commit the cluster had made when it began: on a Galera cluster
 * `wsrep_sync_wait=1` makes the node apply what it has received before it reads (a wait of about one replication
 * round trip). Only for reads where a change made through another instance must hold at once: the cache counters,
 * the station token, the session's user. On a single MariaDB (wsrep_on=OFF) the setting is accepted and changes
 * nothing, so the same statement runs everywhere and the tests run what a cluster runs.
 */
export function causalSql(sql: string): string {
  return `SET STATEMENT wsrep_sync_wait=1 FOR ${sql}`
}

/** Runs a causal SELECT and answers its rows. */
export async function causalRows<T = Record<string, unknown>>(db: Knex, sql: string, bindings: readonly unknown[] = []): Promise<T[]> {
  const [rows] = await db.raw(causalSql(sql), bindings as any[])
  return rows as T[]
}

/** A query builder's SELECT run as a causal read. */
export async function causalQuery<T = Record<string, unknown>>(db: Knex, q: Knex.QueryBuilder): Promise<T[]> {
  const { sql, bindings } = q.toSQL().toNative()
  return causalRows<T>(db, sql, bindings)
}
