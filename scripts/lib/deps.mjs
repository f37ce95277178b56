import { existsSync, statSync } from 'node:fs'
import { resolve } from 'node:path'
import { root } from './env.mjs'
import { log, runOrFail, hasCommand } from './run.mjs'

/** npm ci when node_modules is missing or older than the lock file. */
export function ensureNodeModules() {
  const lock = resolve(root, 'package-lock.json')
  const marker = resolve(root, 'node_modules/.package-lock.json')
  if (existsSync(marker) && statSync(marker).mtimeMs >= statSync(lock).mtimeMs) return
  log('installing npm packages (npm ci)…')
  runOrFail('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root })
}

let aptUpdated = false
function apt(args) {
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  const asRoot = !process.getuid || process.getuid() === 0
  if (asRoot) runOrFail('apt-get', args, { env })
  else runOrFail('sudo', ['apt-get', ...args], { env })
}

/** Installs a Debian package when the command it provides is missing. */
export function ensureDebianPackage(command, pkg) {
  if (!hasCommand(command)) installDebianPackage(pkg)
}

/** Installs a Debian package when a file it provides (a library, say) is missing. */
export function ensureDebianFile(path, pkg) {
  if (!existsSync(path)) installDebianPackage(pkg)
}

function installDebianPackage(pkg) {
  log(`installing ${pkg} from Debian…`)
  if (!aptUpdated) { apt(['update', '-qq']); aptUpdated = true }
  apt(['install', '-y', '-qq', pkg])
}
