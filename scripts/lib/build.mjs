import { createHash } from 'node:crypto'
import { existsSync, readFileSync, readdirSync, statSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { root } from './env.mjs'
import { log, runOrFail } from './run.mjs'
import { ensureNodeModules } from './deps.mjs'

const SOURCES = ['app', 'server', 'shared', 'public', 'fixtures', 'nuxt.config.ts', 'tailwind.config.ts', 'package-lock.json']
const outputDir = resolve(root, process.env.TERCET_OUTPUT_DIR || '.output')
const stamp = resolve(outputDir, '.source-hash')

function walk(path, out) {
  const st = statSync(path)
  if (st.isDirectory()) for (const name of readdirSync(path).sort()) walk(join(path, name), out)
  else out.push(`${path}:${st.size}:${st.mtimeMs}`)
}

function sourceHash() {
  const files = []
  for (const s of SOURCES) { const p = resolve(root, s); if (existsSync(p)) walk(p, files) }
  return createHash('sha256').update(files.join('\n')).digest('hex')
}

/**
 * Builds the server only when a source file changed since the last build. Packages come first: a lock file that
 * moved on (a pull, a merge) would otherwise leave a build that cannot load the packages it now needs.
 */
export function buildIfChanged() {
  ensureNodeModules()
  const hash = sourceHash()
  if (existsSync(resolve(outputDir, 'server/index.mjs')) && existsSync(stamp) && readFileSync(stamp, 'utf8') === hash) {
    log('build is up to date')
    return
  }
  log('building the application (nuxt build)…')
  runOrFail(resolve(root, 'node_modules/.bin/nuxt'), ['build'], { cwd: root, env: { ...process.env, NODE_ENV: 'production' } })
  writeFileSync(stamp, hash)
}
