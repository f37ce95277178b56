import { readdirSync, statSync } from 'node:fs'
import { join, relative, resolve } from 'node:path'

/** Every API handler file with its method and route ("/api/path/:param"), derived from Nuxt's file naming. */
export function apiRouteFiles(root = resolve(process.cwd(), 'server/api')): { method: string; route: string; file: string }[] {
  const out: { method: string; route: string; file: string }[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const p = join(dir, name)
      if (statSync(p).isDirectory()) { walk(p); continue }
      const m = relative(root, p).match(/^(.*?)(?:\.(get|post|put|patch|delete))?\.ts$/)
      if (!m) continue
      const route = ('/api/' + m[1]!).replace(/\/index$/, '').replace(/\[\.\.\.[^\]]*\]/g, '**').replace(/\[([^\]]+)\]/g, ':$1')
      out.push({ method: (m[2] ?? 'get').toUpperCase(), route, file: p })
    }
  }
  walk(root)
  return out.sort((a, b) => `${a.method} ${a.route}`.localeCompare(`${b.method} ${b.route}`))
}

/** Every API handler file as "METHOD /api/path/:param". */
export function apiRoutesFromFiles(root = resolve(process.cwd(), 'server/api')): string[] {
  return apiRouteFiles(root).map((r) => `${r.method} ${r.route}`).sort()
}
