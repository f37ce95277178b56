import net from 'node:net'
import type { Knex } from 'knex'
import mysql from 'mysql2'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { withDriverConnection } from '../../server/database/raw-connection'
import { isDatabaseUnavailable } from '../../server/utils/database-unavailable'

// The errors mysql2 and knex really raise when the connection to MariaDB is cut, taken from a cut made here: the
// test talks to the database through a loopback relay it can sever mid-statement (with a reset, as a crashed server
// or a dropped link leaves it), then refuse.
type Relay = { port: number; cut: () => void; close: () => Promise<void> }

function relay(target: number): Promise<Relay> {
  const sockets = new Set<net.Socket>()
  const server = net.createServer((client) => {
    const upstream = net.connect(target, '127.0.0.1')
    for (const s of [client, upstream]) { sockets.add(s); s.on('error', () => {}); s.on('close', () => sockets.delete(s)) }
    client.pipe(upstream)
    upstream.pipe(client)
  })
  return new Promise((done) => server.listen(0, '127.0.0.1', () => done({
    port: (server.address() as net.AddressInfo).port,
    cut: () => { for (const s of sockets) s.resetAndDestroy() },
    close: () => new Promise<void>((closed) => { for (const s of sockets) s.destroy(); server.close(() => closed()) }),
  })))
}

const conn = connectionFromEnv()
let r: Relay
let db: Knex
const seen: Record<string, unknown> = {}

beforeAll(async () => {
  r = await relay(conn.port)
  db = createKnex({ ...conn, port: r.port }, { min: 0, max: 4 })
})
afterAll(async () => {
  await db.destroy().catch(() => {})
  await r.close()
  // the codes met, for whoever widens the classifier next
  process.stdout.write(JSON.stringify({ cutConnectionErrors: seen }) + '\n')
})

const failureOf = async (p: Promise<unknown>): Promise<any> => {
  try { await p } catch (e) { return e }
  throw new Error('expected the statement to fail')
}
const shortly = (ms: number) => new Promise((done) => setTimeout(done, ms))

describe('errors of a connection cut under a statement', () => {
  it('a query through knex cut mid-statement is a database fault', async () => {
    await db.raw('SELECT 1')
    const pending = failureOf(db.raw('SELECT SLEEP(5)'))
    await shortly(300)
    r.cut()
    const e = await pending
    seen.knexQuery = { code: e.code, errno: e.errno, fatal: e.fatal, message: String(e.message).slice(0, 120) }
    expect(isDatabaseUnavailable(e)).toBe(true)
    // the pool drops the dead connection and the next statement works again
    expect((await db.raw('SELECT 2 AS two'))[0][0].two).toBe(2)
  })

  it('a statement sent through the driver on a pooled connection (the run writer) cut mid-statement is one', async () => {
    const e = await failureOf(withDriverConnection(db, async (send) => {
      const p = send('SELECT SLEEP(5)')
      setTimeout(() => r.cut(), 300)
      return p
    }))
    seen.driverQuery = { code: e.code, errno: e.errno, fatal: e.fatal, message: String(e.message).slice(0, 120) }
    expect(isDatabaseUnavailable(e)).toBe(true)
    // a further command on the connection that was cut
    const again = await failureOf(new Promise((done, fail) => {
      const c = mysql.createConnection({ host: '127.0.0.1', port: r.port, user: conn.user, password: conn.password, database: conn.database })
      c.on('error', () => {})
      c.connect((err) => {
        if (err) return fail(err)
        r.cut()
        setTimeout(() => c.query('SELECT 1', (qe) => (qe ? fail(qe) : done(null))), 200)
      })
    }))
    seen.commandOnClosed = { code: again.code, fatal: again.fatal, message: String(again.message).slice(0, 120) }
    expect(isDatabaseUnavailable(again)).toBe(true)
  })

  it('a connection the server kills is one', async () => {
    const victim = mysql.createConnection({ host: '127.0.0.1', port: conn.port, user: conn.user, password: conn.password, database: conn.database })
    await new Promise<void>((done, fail) => victim.connect((err) => (err ? fail(err) : done())))
    victim.on('error', () => {})
    const pending = failureOf(new Promise((done, fail) => victim.query('SELECT SLEEP(5)', (err) => (err ? fail(err) : done(null)))))
    await shortly(300)
    const killer = createKnex(conn, { min: 0, max: 1 })
    await killer.raw(`KILL CONNECTION ${victim.threadId}`)
    await killer.destroy()
    const e = await pending
    seen.killed = { code: e.code, errno: e.errno, fatal: e.fatal, message: String(e.message).slice(0, 120) }
    expect(isDatabaseUnavailable(e)).toBe(true)
    victim.destroy()
  })

  it('a pool that cannot connect at all fails at once with a database fault, not after the acquire timeout', async () => {
    const closed = await relay(conn.port)
    const port = closed.port
    await closed.close()
    const nowhere = createKnex({ ...conn, port }, { min: 0, max: 2 })
    const t0 = Date.now()
    const e = await failureOf(nowhere.raw('SELECT 1'))
    seen.refused = { code: e.code, name: e.name, message: String(e.message).slice(0, 120) }
    expect(isDatabaseUnavailable(e)).toBe(true)
    expect(Date.now() - t0).toBeLessThan(5000)
    await nowhere.destroy()
  })

  it('the errors of a rule or of the code are not', async () => {
    expect(isDatabaseUnavailable(await failureOf(db.raw('SELECT * FROM no_such_table_here')))).toBe(false)
    expect(isDatabaseUnavailable(await failureOf(db.raw('SELEC 1')))).toBe(false)
  })
})
