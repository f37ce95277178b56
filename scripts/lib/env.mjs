// Reads and, on first run, creates the project's git-ignored .env with generated secrets.
import { existsSync, readFileSync, writeFileSync } from 'node:fs'
import { randomBytes } from 'node:crypto'
import { resolve } from 'node:path'

export const root = resolve(import.meta.dirname, '../..')
export const dataDir = resolve(root, '.data')
const envFile = resolve(root, '.env')

function parse(text) {
  const out = {}
  for (const line of text.split('\n')) {
    const m = line.match(/^\s*([A-Z0-9_]+)\s*=\s*(.*)\s*$/)
    if (m) out[m[1]] = m[2].replace(/^"(.*)"$/, '$1')
  }
  return out
}

/** Ensures .env holds a session password and a database password; returns the merged environment. */
export function loadEnv() {
  const fileVars = existsSync(envFile) ? parse(readFileSync(envFile, 'utf8')) : {}
  const wanted = {
    NUXT_SESSION_PASSWORD: () => randomBytes(32).toString('hex'),
    TERCET_DB_APP_PASSWORD: () => randomBytes(18).toString('base64url'),
  }
  let changed = false
  for (const [key, make] of Object.entries(wanted)) {
    if (!fileVars[key] && !process.env[key]) { fileVars[key] = make(); changed = true }
  }
  if (changed) {
    writeFileSync(envFile, Object.entries(fileVars).map(([k, v]) => `${k}=${v}`).join('\n') + '\n', { mode: 0o600 })
  }
  return { ...fileVars, ...process.env }
}

export function dbSettings(env, database) {
  return {
    port: Number(env.TERCET_DB_PORT || 3307),
    user: env.TERCET_DB_APP_USER || 'tercet',
    password: env.TERCET_DB_APP_PASSWORD,
    database,
  }
}

/** The variables the Nuxt server reads (runtimeConfig overrides). */
export function serverEnv(env, db) {
  return {
    ...env,
    NUXT_DB_HOST: '127.0.0.1',
    NUXT_DB_PORT: String(db.port),
    NUXT_DB_USER: db.user,
    NUXT_DB_PASSWORD: db.password,
    NUXT_DB_DATABASE: db.database,
  }
}
