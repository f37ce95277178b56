// Build (when sources changed) and a fresh, seeded bench database, run as a child so that the
// bench's own stdout carries nothing but its result lines.
import { resolve } from 'node:path'
import { loadEnv, root } from './env.mjs'
import { buildIfChanged } from './build.mjs'
import { prepareDatabase } from './database.mjs'

const [database, mode] = process.argv.slice(2)
if (!database) throw new Error('usage: bench-prepare.mjs <database> [--no-build]')
if (mode !== '--no-build') buildIfChanged()
await prepareDatabase(loadEnv(), database, { recreate: true, seed: true, tokenFile: resolve(root, `.data/${database}-station-tokens.json`) })
