import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { sourceFiles } from '../../support/source-files'

// Two instances on a Galera cluster. Galera replicates neither named locks (GET_LOCK and its kin take a lock on one node only) nor LOCK TABLES (refused
// or ignored with wsrep on), so mutual exclusion between app instances lives in lease rows (job_leases,
// lot_fold_leases, the render and mail leases): the server's code must not use either.

describe('locks between instances', () => {
  it('no server code takes a named lock or locks tables', () => {
    const offending = sourceFiles('server').filter((p) => /\b(GET_LOCK|RELEASE_LOCK|RELEASE_ALL_LOCKS|IS_FREE_LOCK|IS_USED_LOCK)\s*\(|\bLOCK\s+TABLES?\b/i.test(readFileSync(p, 'utf8')))
    expect(offending).toEqual([])
  })

  it('every transaction of the server goes through writeTransaction, which runs it again on a write conflict', () => {
    // allowed: the helper itself; the phase-noise view's read-only snapshot (it writes nothing, so nothing conflicts);
    // the demo seed, run once by the bring-up before any instance serves
    const allowed = new Set([join('server', 'database', 'write-retries.ts'), join('server', 'services', 'analytics', 'phase-noise.ts')])
    const offending = sourceFiles('server').filter((p) => !allowed.has(p) && !p.startsWith(join('server', 'database', 'seeds')))
      .flatMap((p) => readFileSync(p, 'utf8').split('\n').map((line, i) => ({ p, i, line })))
      .filter(({ line }) => !/^\s*(\/\/|\*|\/\*)/.test(line) && /\.transaction\(/.test(line))
      .map(({ p, i }) => `${p}:${i + 1}`)
    expect(offending).toEqual([])
  })
})
