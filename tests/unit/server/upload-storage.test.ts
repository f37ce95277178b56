import { readFileSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'
import { sourceFiles } from '../../support/source-files'

// Uploads go to the database, never to files: no server source writes to the file system or names a temporary folder,
// so no part of a client's file name can ever become a path.

describe('server file system use', () => {
  it('no server source writes files or uses the temporary folder', () => {
    const root = join(process.cwd(), 'server')
    const offending = sourceFiles(root).filter((f) => /\b(createWriteStream|writeFile(Sync)?|appendFile(Sync)?|mkdtemp(Sync)?|tmpdir|rename(Sync)?|copyFile(Sync)?|unlink(Sync)?)\s*\(/.test(readFileSync(f, 'utf8')))
    expect(offending.map((f) => relative(process.cwd(), f))).toEqual([])
  })
})
