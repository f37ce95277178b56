// The built server as a child process of the test, on a database of the test's choosing, that the test may kill
// outright (SIGKILL: no shutdown hooks, no lease given back) and start again.
import { spawn, type ChildProcess } from 'node:child_process'
import { once } from 'node:events'
import net from 'node:net'
import { resolve } from 'node:path'

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const srv = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port
      srv.close(() => done(port))
    })
  })
}

export type KillableServer = { url: string; child: ChildProcess; kill: () => Promise<void>; stop: () => Promise<void> }

export async function startKillableServer(env: Record<string, string | undefined>): Promise<KillableServer> {
  const entry = resolve(process.cwd(), process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')
  const port = await freePort()
  const child = spawn(process.execPath, [entry], {
    env: { ...env, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production' },
    stdio: ['ignore', 'ignore', 'inherit'],
  })
  const url = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 30_000
  for (;;) {
    try { if ((await fetch(`${url}/api/health`)).ok) break } catch { /* not listening yet */ }
    if (child.exitCode !== null) throw new Error(`the server exited with ${child.exitCode}`)
    if (Date.now() > deadline) throw new Error('the server did not become healthy within 30 s')
    await new Promise((r) => setTimeout(r, 200))
  }
  const end = async (signal: NodeJS.Signals) => {
    if (child.exitCode !== null || child.signalCode !== null) return
    const exited = once(child, 'exit')
    child.kill(signal)
    await exited
  }
  return { url, child, kill: () => end('SIGKILL'), stop: () => end('SIGTERM') }
}
