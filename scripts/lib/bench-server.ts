// What the load scripts (bench:ingest, soak) share: a fresh bench database and build, the built server on a free
// loopback port, and readings of a process's memory and CPU from Linux /proc.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process'
import { existsSync, readFileSync } from 'node:fs'
import net from 'node:net'
import { resolve } from 'node:path'
import { root } from './env.mjs'

export const HOST = '127.0.0.1'

/** Builds when sources changed (unless `noBuild`) and recreates `database` seeded, in a child process. */
export function prepareBenchDatabase(database: string, noBuild: boolean): void {
  const prep = spawnSync(process.execPath, [resolve(root, 'scripts/lib/bench-prepare.mjs'), database, ...(noBuild ? ['--no-build'] : [])], { cwd: root, stdio: ['ignore', 2, 2], env: process.env })
  if (prep.status !== 0) throw new Error('preparing the build or the bench database failed (see above)')
}

/** The built server's entry file; throws when there is no build. */
export function builtEntry(): string {
  const entry = resolve(root, process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')
  if (!existsSync(entry)) throw new Error(`no build at ${entry}`)
  return entry
}

export function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const s = net.createServer().once('error', fail).listen(0, HOST, () => {
      const port = (s.address() as net.AddressInfo).port
      s.close(() => done(port))
    })
  })
}

/** Starts the built server with `env`; its output goes to `output` (an open file) or else this process's stderr. */
export function startBuiltServer(entry: string, env: NodeJS.ProcessEnv, nodeArgs: string[] = [], output: number = 2): ChildProcess {
  return spawn(process.execPath, [...nodeArgs, entry], { env, stdio: ['ignore', output, output] })
}

export async function waitHealthy(base: string, child: ChildProcess, withinMs = 60_000): Promise<void> {
  const deadline = Date.now() + withinMs
  for (;;) {
    try { if ((await fetch(`${base}/api/health`)).ok) return } catch { /* not listening yet */ }
    if (child.exitCode !== null || child.signalCode !== null) throw new Error('the bench server exited before becoming healthy')
    if (Date.now() > deadline) throw new Error(`the bench server did not become healthy within ${withinMs / 1000} s`)
    await new Promise((r) => setTimeout(r, 200))
  }
}

/** SIGTERM, then SIGKILL after 10 s; resolves once the child is gone. */
export function stopChild(child: ChildProcess | undefined): Promise<void> {
  if (!child || child.exitCode !== null || child.signalCode !== null) return Promise.resolve()
  return new Promise((done) => {
    const hard = setTimeout(() => child.kill('SIGKILL'), 10_000)
    child.once('exit', () => { clearTimeout(hard); done() })
    child.kill('SIGTERM')
  })
}

/** Resident memory of a process in MB, from /proc/<pid>/status (VmRSS); NaN once it is gone. */
export function rssMb(pid: number): number {
  try {
    const m = readFileSync(`/proc/${pid}/status`, 'utf8').match(/^VmRSS:\s+(\d+)\s+kB/m)
    return m ? Number(m[1]) / 1024 : Number.NaN
  } catch { return Number.NaN }
}

/** User and system CPU seconds a process has used so far (Linux /proc, 100 ticks per second). */
export function cpuTimes(pid: number): { user: number; system: number } {
  try {
    const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ')
    return { user: Number(f[11]) / 100, system: Number(f[12]) / 100 }
  } catch { return { user: Number.NaN, system: Number.NaN } }
}

/** The project's MariaDB server process. */
export function databasePid(): number {
  try { return Number(readFileSync(resolve(root, '.data/mariadb/mysqld.pid'), 'utf8').trim()) } catch { return -1 }
}
