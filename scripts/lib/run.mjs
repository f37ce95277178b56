import { spawn, spawnSync } from 'node:child_process'

export function log(msg) { process.stdout.write(`[tercet] ${msg}\n`) }

export function fail(msg) {
  process.stderr.write(`\n[tercet] ${msg}\n`)
  process.exit(1)
}

/** Runs a command, inheriting stdio; exits the process with a clear message when it fails. */
export function runOrFail(cmd, args, opts = {}) {
  const r = spawnSync(cmd, args, { stdio: 'inherit', ...opts })
  if (r.status !== 0) fail(`command failed (${r.status ?? r.signal}): ${cmd} ${args.join(' ')}`)
  return r
}

export function hasCommand(name) {
  return spawnSync('sh', ['-c', `command -v ${name}`], { stdio: 'ignore' }).status === 0
}

export function spawnChild(cmd, args, opts = {}) {
  return spawn(cmd, args, { stdio: 'inherit', ...opts })
}
