// Starts the local mail catcher (scripts/lib/mail-fake.mjs) for npm start and npm test when no SMTP relay is
// configured, and points the server's SMTP settings at it; with TERCET_SMTP_HOST set, nothing is started.
import { spawn } from 'node:child_process'
import net from 'node:net'
import { rmSync } from 'node:fs'
import { resolve } from 'node:path'
import { dataDir, root } from './env.mjs'
import { fail, log } from './run.mjs'

const portFree = (port) => new Promise((done) => {
  const srv = net.createServer().once('error', () => done(false)).once('listening', () => srv.close(() => done(true)))
  srv.listen(port, '127.0.0.1')
})
const answers = (port) => new Promise((done) => {
  const s = net.connect(port, '127.0.0.1').once('connect', () => { s.destroy(); done(true) }).once('error', () => done(false))
})

/** Returns the environment for the server and a stop function; the catcher also stops when this process ends. */
export async function startMailFakeIfNeeded(env, database, { fresh = false } = {}) {
  if (env.TERCET_SMTP_HOST) return { env: {}, stop: () => {} }
  const port = Number(env.TERCET_MAIL_FAKE_PORT || 2525)
  if (!(await portFree(port))) fail(`port ${port} for the local mail catcher is in use; set TERCET_MAIL_FAKE_PORT to a free port, or TERCET_SMTP_HOST to use a relay.`)
  const dir = resolve(dataDir, 'mail', database)
  if (fresh) rmSync(dir, { recursive: true, force: true })
  const child = spawn(process.execPath, [resolve(root, 'scripts/lib/mail-fake.mjs'), dir], {
    cwd: root, env: { ...process.env, TERCET_MAIL_FAKE_PORT: String(port) }, stdio: ['ignore', 'inherit', 'inherit', 'ipc'],
  })
  let exited = false
  child.on('exit', () => { exited = true })
  const deadline = Date.now() + 10_000
  while (!(await answers(port))) {
    if (exited) fail('the local mail catcher did not start (see above).')
    if (Date.now() > deadline) fail(`the local mail catcher did not answer on 127.0.0.1:${port} within 10 s.`)
    await new Promise((r) => setTimeout(r, 100))
  }
  child.unref()
  child.channel?.unref()
  const stop = () => { if (!exited) child.kill('SIGTERM') }
  process.on('exit', stop)
  log(`local mail catcher on 127.0.0.1:${port}; messages land in ${dir}`)
  return {
    env: { TERCET_SMTP_HOST: '127.0.0.1', TERCET_SMTP_PORT: String(port), TERCET_SMTP_SECURE: 'false', TERCET_MAIL_FAKE_DIR: dir },
    stop,
  }
}
