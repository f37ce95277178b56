// Another instance of the built server on the same database, with its own environment (e.g. a shorter signing window).
import { spawn, type ChildProcess } from 'node:child_process'
import net from 'node:net'
import { resolve } from 'node:path'
import { inject } from 'vitest'
import { teeOutput } from './server-log'

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const srv = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port
      srv.close(() => done(port))
    })
  })
}

export async function startSecondServer(env: Record<string, string>): Promise<{ url: string; stop: () => void }> {
  const entry = resolve(process.cwd(), process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')
  const port = await freePort()
  // its output joins the project's server logs, which the log check reads after every other file (stderr shown as before)
  const logDir = inject('serverLogDir') as string | undefined
  const child: ChildProcess = spawn(process.execPath, [entry], {
    env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production', TERCET_TRUST_PROXY: '1', ...env },
    stdio: logDir ? ['ignore', 'pipe', 'pipe'] : ['ignore', 'ignore', 'inherit'],
  })
  if (logDir) teeOutput(child, resolve(logDir, `second-${port}.log`), { stdout: false, stderr: true })
  const url = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 30_000
  for (;;) {
    try { if ((await fetch(`${url}/api/health`)).ok) break } catch { /* not listening yet */ }
    if (child.exitCode !== null) throw new Error(`the second server exited with ${child.exitCode}`)
    if (Date.now() > deadline) throw new Error('the second server did not become healthy within 30 s')
    await new Promise((r) => setTimeout(r, 200))
  }
  return { url, stop: () => { child.kill('SIGTERM') } }
}
