// A MariaDB of the fault tests' own (own data folder under .data/, own port, never the one npm start and npm test
// use), a fresh database migrated and seeded on it, the built server against it with its output kept, and the
// means to stop, kill and start either of them.
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdirSync, readFileSync } from 'node:fs'
import net from 'node:net'
import { resolve } from 'node:path'
import type { Knex } from 'knex'
import { connectionFromEnv, createKnex } from '../../../server/database/connection'
// @ts-expect-error plain ES module without types
import { dataDir, loadEnv, serverEnv } from '../../../scripts/lib/env.mjs'
// @ts-expect-error plain ES module without types
import { mariadbInstance } from '../../../scripts/lib/mariadb.mjs'
// @ts-expect-error plain ES module without types
import { prepareDatabase } from '../../../scripts/lib/database.mjs'
import { startMailFake } from '../../../scripts/lib/mail-fake.mjs'

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

export function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const srv = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port
      srv.close(() => done(port))
    })
  })
}

/** SIGKILL of a child process still running; resolves once it has exited. */
export async function killAndWait(c: ChildProcess | undefined): Promise<void> {
  if (!c || c.exitCode !== null || c.signalCode) return
  const gone = new Promise((r) => c.once('exit', r))
  c.kill('SIGKILL')
  await gone
}

/** A fresh database on a rig's own MariaDB (one server or a cluster's SQL address), seeded, a pool to it and the stations' tokens. */
export async function rigDatabase(server: unknown, dbPort: number, database: string, name: string) {
  const env = { ...loadEnv(), TERCET_DB_PORT: String(dbPort) }
  const tokenFile = resolve(dataDir, `${name}-station-tokens.json`)
  const settings = await prepareDatabase(env, database, { recreate: true, seed: true, tokenFile, server })
  const sEnv = serverEnv(env, settings) as Record<string, string>
  return { sEnv, db: createKnex(connectionFromEnv(sEnv), { min: 0, max: 4 }), tokens: JSON.parse(readFileSync(tokenFile, 'utf8')) as Record<string, string> }
}

/** The mail catcher in a folder of its own, and the environment that points a server at it. */
export async function rigMail(name: string) {
  const mailDir = resolve(dataDir, 'mail', `${name}-${Date.now()}`)
  mkdirSync(mailDir, { recursive: true })
  const mail = await startMailFake({ port: await freePort(), dir: mailDir })
  const mailEnv = { TERCET_SMTP_HOST: '127.0.0.1', TERCET_SMTP_PORT: String(mail.port), TERCET_SMTP_SECURE: 'false', TERCET_MAIL_FAKE_DIR: mailDir }
  return { mail, mailDir, mailEnv }
}

export type App = {
  url: string
  /** every line the server wrote, stdout and stderr apart */
  out: string[]
  err: string[]
  stop: () => Promise<void>
  kill: () => Promise<void>
  start: () => Promise<void>
}

export type Rig = {
  db: Knex
  app: App
  tokens: Record<string, string>
  mailDir: string
  /** MariaDB down: cleanly (mariadb-admin shutdown) or with SIGKILL of mariadbd; resolves once it is gone */
  stopDb: (how: 'clean' | 'kill') => Promise<void>
  startDb: () => Promise<void>
  close: () => Promise<void>
}

const DB_PORT = Number(process.env.TERCET_FAULTS_DB_PORT || 3382)

function alive(pid: number): boolean {
  try { process.kill(pid, 0); return true } catch { return false }
}

/** Brings up MariaDB (on DB_PORT, data in .data/faults-mariadb), a fresh `tercet_faults` database and the app. */
export async function startRig(appEnv: Record<string, string> = {}): Promise<Rig> {
  const entry = resolve(process.cwd(), process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')
  const server = mariadbInstance({ base: resolve(dataDir, 'faults-mariadb'), fail: (m: string) => { throw new Error(m) } })
  const { sEnv, db, tokens } = await rigDatabase(server, DB_PORT, 'tercet_faults', 'faults')
  const { mail, mailDir, mailEnv } = await rigMail('faults')

  const port = await freePort()
  const url = `http://127.0.0.1:${port}`
  const out: string[] = []
  const err: string[] = []
  let child: ChildProcess | undefined
  const lines = (into: string[]) => { let rest = ''; return (b: Buffer) => { const parts = (rest + b.toString('utf8')).split('\n'); rest = parts.pop()!; into.push(...parts) } }
  const app: App = {
    url, out, err,
    async start() {
      child = spawn(process.execPath, [entry], {
        env: {
          ...sEnv, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production', TERCET_TRUST_PROXY: '1',
          ...mailEnv, TERCET_MAIL_BACKOFF_MS: '1000', ...appEnv,
        },
        stdio: ['ignore', 'pipe', 'pipe'],
      })
      child.stdout!.on('data', lines(out))
      child.stderr!.on('data', lines(err))
      const me = child
      const deadline = Date.now() + 60_000
      for (;;) {
        try { if ((await fetch(`${url}/api/health`)).ok) return } catch { /* not listening yet */ }
        if (me.exitCode !== null) throw new Error(`the server exited with ${me.exitCode}:\n${err.slice(-20).join('\n')}`)
        if (Date.now() > deadline) throw new Error('the server did not become healthy within 60 s')
        await sleep(200)
      }
    },
    async stop() {
      const c = child
      if (!c || c.exitCode !== null || c.signalCode) return
      const gone = new Promise((r) => c.once('exit', r))
      c.kill('SIGTERM')
      await Promise.race([gone, sleep(15_000)])
      if (c.exitCode === null && !c.signalCode) { c.kill('SIGKILL'); await gone }
    },
    kill: () => killAndWait(child),
  }
  await app.start()

  return {
    db, app, tokens, mailDir,
    async stopDb(how) {
      const pid = server.pid()
      if (!pid) throw new Error('the fault tests\' MariaDB is not running')
      if (how === 'kill') process.kill(pid, 'SIGKILL')
      else spawn('mariadb-admin', ['--no-defaults', `--socket=${server.socket}`, '-uroot', 'shutdown'], { stdio: 'ignore' })
      for (let i = 0; i < 600 && alive(pid); i++) await sleep(50)
      if (alive(pid)) throw new Error('MariaDB did not go down within 30 s')
    },
    async startDb() {
      await server.startMariadb(DB_PORT)
    },
    async close() {
      await app.stop()
      await db.destroy().catch(() => {})
      await mail.close()
      if (server.isRunning()) server.stopMariadb()
    },
  }
}

/** Lines of the server's output that parse as JSON objects with the given `event`. */
export function faultEvents(lines: string[], event: string): Record<string, any>[] {
  const found: Record<string, any>[] = []
  for (const l of lines) {
    if (!l.startsWith('{')) continue
    try { const j = JSON.parse(l); if (j.event === event) found.push(j) } catch { /* not a log line */ }
  }
  return found
}
