// Starts the built server once for the e2e and browser projects, against the test database.
import { spawn, type ChildProcess } from 'node:child_process'
import { existsSync, rmSync } from 'node:fs'
import net from 'node:net'
import { resolve } from 'node:path'
import type { TestProject } from 'vitest/node'
import { serverLogDir, teeOutput } from './server-log'

declare module 'vitest' {
  export interface ProvidedContext { baseUrl: string; serverLogDir: string; serverPid: number }
}

function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const srv = net.createServer().once('error', fail).listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port
      srv.close(() => done(port))
    })
  })
}

let child: ChildProcess | undefined

export async function setup(project: TestProject) {
  const entry = resolve(process.cwd(), process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')
  if (!existsSync(entry)) throw new Error('No build found: run the suite with "npm test", which builds first.')
  const port = await freePort()
  child = spawn(process.execPath, [entry], {
    // the request log (one JSON line per request) would bury the test output
    // the reliability project's server starts with the others but runs its files last; meanwhile its import worker
    // would take over the left-behind imports the e2e tests make for their own server (its files need no takeover)
    env: {
      TERCET_REQUEST_LOG: 'off', ...process.env, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production', TERCET_TRUST_PROXY: '1',
      ...(project.name === 'reliability' ? { TERCET_IMPORT_WORKER: '0' } : {}),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  // shown as before, and kept in .data/test-server-logs/<project>/main.log for the log check run after every other file
  const logDir = serverLogDir(project.name)
  rmSync(logDir, { recursive: true, force: true })
  teeOutput(child, resolve(logDir, 'main.log'), { stdout: true, stderr: true })
  let exited: number | null = null
  child.on('exit', (code) => { exited = code ?? -1 })
  const baseUrl = `http://127.0.0.1:${port}`
  const deadline = Date.now() + 30_000
  for (;;) {
    try {
      const r = await fetch(`${baseUrl}/api/health`)
      if (r.ok) break
    } catch { /* not listening yet */ }
    if (exited !== null) throw new Error(`The test server exited with code ${exited} before becoming healthy.`)
    if (Date.now() > deadline) throw new Error('The test server did not become healthy within 30 s.')
    await new Promise((r) => setTimeout(r, 200))
  }
  project.provide('baseUrl', baseUrl)
  project.provide('serverLogDir', logDir)
  // the reliability tests read the server's memory from /proc/<pid>/status
  project.provide('serverPid', child.pid ?? 0)
}

export async function teardown() {
  child?.kill('SIGTERM')
}
