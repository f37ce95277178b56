import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { Readable } from 'node:stream'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { spoolUpload } from '../../../server/services/imports'
import { RuleError } from '../../../server/services/rule-error'

let dir: string
let saved: string | undefined

beforeEach(() => {
  saved = process.env.TMPDIR
  dir = mkdtempSync(join(tmpdir(), 'spool-test-'))
  process.env.TMPDIR = dir
})

afterEach(() => {
  if (saved === undefined) delete process.env.TMPDIR
  else process.env.TMPDIR = saved
  rmSync(dir, { recursive: true, force: true })
})

const body = (...chunks: (string | Buffer)[]) => Readable.from(chunks.map((c) => (Buffer.isBuffer(c) ? c : Buffer.from(c))))

async function refusal(p: Promise<unknown>): Promise<RuleError> {
  try {
    await p
  } catch (e) {
    if (e instanceof RuleError) return e
    throw e
  }
  throw new Error('the upload was accepted')
}

describe('spoolUpload', () => {
  it('copies the upload byte for byte and counts its lines', async () => {
    const text = '{"a":1}\n\n{"b":2}'
    const s = await spoolUpload(body('{"a":1}\n', '\n{"b', '":2}'), 'jsonl')
    expect(s.lines).toBe(3)
    expect(readFileSync(s.path, 'utf8')).toBe(text)
  })

  it('refuses a CSV header with an unknown column and leaves no file behind', async () => {
    const e = await refusal(spoolUpload(body('id,serial,colour\n', '1,2,3\n'), 'csv'))
    expect(e.status).toBe(400)
    expect(e.extra.unknownColumns).toEqual(['colour'])
    expect(readdirSync(dir)).toEqual([])
  })

  it('refuses a line that is not UTF-8, naming it, and leaves no file behind', async () => {
    const e = await refusal(spoolUpload(body('{"ok":1}\n', Buffer.from('{"who":"Jürgen"}\n', 'latin1'), '{"ok":2}\n'), 'jsonl'))
    expect(e.extra.lines).toEqual([2])
    expect(readdirSync(dir)).toEqual([])
  })

  it('refuses a file of blank lines, and a CSV with only its header', async () => {
    expect((await refusal(spoolUpload(body('\n \n'), 'jsonl'))).message).toMatch(/no runs/)
    const header = 'id,serial,partNumber,lot,startedAt,finishedAt,name,value,unit\n'
    expect((await refusal(spoolUpload(body(header), 'csv'))).message).toMatch(/no runs/)
    expect(readdirSync(dir)).toEqual([])
  })
})
