import { readdirSync, statSync } from 'node:fs'
import { join, relative, resolve } from 'node:path'

/** Every API handler file as "METHOD /api/path/:param", derived from Nuxt's file naming. */
export function apiRoutesFromFiles(root = resolve(process.cwd(), 'server/api')): string[] {
  const out: string[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const p = join(dir, name)
      if (statSync(p).isDirectory()) { walk(p); continue }
      const m = relative(root, p).match(/^(.*?)(?:\.(get|post|put|patch|delete))?\.ts$/)
      if (!m) continue
      const method = (m[2] ?? 'get').toUpperCase()
      const path = ('/api/' + m[1]!).replace(/\/index$/, '').replace(/\[\.\.\.[^\]]*\]/g, '**').replace(/\[([^\]]+)\]/g, ':$1')
      out.push(`${method} ${path}`)
    }
  }
  walk(root)
  return out.sort()
}
