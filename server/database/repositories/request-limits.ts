// Fixed-window request counters shared by every app instance.
import type { Knex } from 'knex'
import { withWriteRetries } from '../write-retries'

/**
 * Counts one request of `client` in `bucket` and returns the window's count and start. A window that ended before
 * `now` starts again at `now` with this request. (Assignments of ON DUPLICATE KEY UPDATE apply left to right, so
 * `hits` is decided on the window's old start before the start moves.)
 */
export async function countRequest(db: Knex, bucket: string, client: string, now: Date, windowMs: number): Promise<{ hits: number; windowStart: Date }> {
  const expired = new Date(now.getTime() - windowMs)
  // attempts spread over cluster nodes update the same row: the one the cluster aborts counts again
  const [results] = await withWriteRetries(() => db.raw(
    `INSERT INTO request_limits (bucket, client_key, window_start, hits) VALUES (?, ?, ?, 1)
       ON DUPLICATE KEY UPDATE hits = IF(window_start <= ?, 1, hits + 1), window_start = IF(window_start <= ?, VALUES(window_start), window_start);
     SELECT hits, window_start FROM request_limits WHERE bucket = ? AND client_key = ?`,
    [bucket, client, now, expired, expired, bucket, client]))
  const row = (results as any[])[1][0]
  return { hits: Number(row.hits), windowStart: new Date(row.window_start) }
}

/** Drops counters whose window ended long ago. */
export async function dropStaleCounters(db: Knex, before: Date): Promise<void> {
  await db('request_limits').where('window_start', '<', before).delete()
}

/** The count of `client`'s window in `bucket` as of `now`, without counting anything (0 once the window ended). */
export async function readWindow(db: Knex, bucket: string, client: string, now: Date, windowMs: number): Promise<{ hits: number; windowStart: Date } | undefined> {
  const row = await db('request_limits').where({ bucket, client_key: client })
    .andWhere('window_start', '>', new Date(now.getTime() - windowMs)).first('hits', 'window_start')
  return row ? { hits: Number(row.hits), windowStart: new Date(row.window_start) } : undefined
}

/** Forgets `client`'s window in `bucket` (a successful sign-in clears its account's failures). */
export async function clearWindow(db: Knex, bucket: string, client: string): Promise<void> {
  await db('request_limits').where({ bucket, client_key: client }).delete()
}
