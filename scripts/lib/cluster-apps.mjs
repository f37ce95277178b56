// Several instances of the built server, each on its own loopback port, for the cluster topology: HAProxy's HTTP
// address spreads requests over them (scripts/lib/cluster.mjs).
import { spawn } from 'node:child_process'
import { resolve } from 'node:path'
import { root } from './env.mjs'

const sleep = (ms) => new Promise((r) => setTimeout(r, ms))

/**
 * Starts one instance; resolves once it answers /api/health. `env` is the server's environment (database through
 * HAProxy's SQL address, mail, session password shared by every instance so that any of them reads any session).
 */
export async function startInstance(env, port, { stdio = 'inherit' } = {}) {
  const child = spawn(process.execPath, [resolve(root, '.output/server/index.mjs')], {
    cwd: root, env: { ...env, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production', TERCET_CLUSTER: '1', TERCET_TRUST_PROXY: '1' }, stdio,
  })
  const deadline = Date.now() + 60_000
  for (;;) {
    try { if ((await fetch(`http://127.0.0.1:${port}/api/health`)).ok) return child } catch { /* not listening yet */ }
    if (child.exitCode !== null) throw new Error(`the instance on port ${port} exited with ${child.exitCode}`)
    if (Date.now() > deadline) throw new Error(`the instance on port ${port} did not become healthy within 60 s`)
    await sleep(200)
  }
}
