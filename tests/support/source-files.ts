import { readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'

/** Every TypeScript and JavaScript source below `dir`, for tests that read the code itself. */
export function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name)
    return statSync(p).isDirectory() ? sourceFiles(p) : /\.(ts|mjs|js)$/.test(name) ? [p] : []
  })
}
