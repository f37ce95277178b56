import { createHash } from 'node:crypto'
import { Readable } from 'node:stream'
import { describe, expect, it } from 'vitest'
import { receiveUpload, UPLOAD_CHUNK_BYTES } from '../../../server/services/import-upload'
import { RuleError } from '../../../server/services/rule-error'

const body = (...chunks: (string | Buffer)[]) => Readable.from(chunks.map((c) => (Buffer.isBuffer(c) ? c : Buffer.from(c))))

/** Receives into memory, keeping every stored slice in order. */
async function receive(source: Readable, format: 'jsonl' | 'csv', maxBytes?: number) {
  const slices: { seq: number; bytes: Buffer }[] = []
  const r = await receiveUpload(source, format, async (seq, bytes) => { slices.push({ seq, bytes }) }, maxBytes)
  return { ...r, slices }
}

async function refusal(p: Promise<unknown>): Promise<RuleError> {
  try {
    await p
  } catch (e) {
    if (e instanceof RuleError) return e
    throw e
  }
  throw new Error('the upload was accepted')
}

describe('receiveUpload', () => {
  it('hands on the upload byte for byte, counts its lines and gives its SHA-256', async () => {
    const text = '{"a":1}\n\n{"b":2}'
    const r = await receive(body('{"a":1}\n', '\n{"b', '":2}'), 'jsonl')
    expect(r.lines).toBe(3)
    expect(Buffer.concat(r.slices.map((s) => s.bytes)).toString('utf8')).toBe(text)
    expect(r).toMatchObject({ bytes: text.length, chunks: 1, sha256: createHash('sha256').update(text).digest('hex') })
  })

  it('stores slices of about 1 MiB, numbered from 0, that join into the file', async () => {
    const line = JSON.stringify({ pad: 'x'.repeat(1000) }) + '\n'
    const parts = Array.from({ length: 3000 }, () => line)
    const r = await receive(body(...parts), 'jsonl')
    expect(r.slices.map((s) => s.seq)).toEqual([0, 1, 2])
    for (const s of r.slices.slice(0, -1)) expect(s.bytes.length).toBeGreaterThanOrEqual(UPLOAD_CHUNK_BYTES)
    expect(Buffer.concat(r.slices.map((s) => s.bytes)).equals(Buffer.from(parts.join('')))).toBe(true)
    expect(r.lines).toBe(3000)
  })

  it('refuses a CSV header with an unknown column, storing nothing', async () => {
    const stored: number[] = []
    const e = await refusal(receiveUpload(body('id,serial,colour\n', '1,2,3\n'), 'csv', async (seq) => { stored.push(seq) }))
    expect(e.status).toBe(400)
    expect(e.extra.unknownColumns).toEqual(['colour'])
    expect(stored).toEqual([])
  })

  it('refuses a line that is not UTF-8 with 422, naming it', async () => {
    const e = await refusal(receive(body('{"ok":1}\n', Buffer.from('{"who":"Jürgen"}\n', 'latin1'), '{"ok":2}\n'), 'jsonl'))
    expect(e.status).toBe(422)
    expect(e.extra.lines).toEqual([2])
  })

  it('refuses a file holding a NUL byte, and a PDF or ZIP sent in place of text, with 422', async () => {
    const nul = await refusal(receive(body('{"ok":1}\n{"a":"\u0000"}\n'), 'jsonl'))
    expect(nul.status).toBe(422)
    expect(nul.message).toMatch(/NUL byte \(at byte 16\)/)
    const pdf = await refusal(receive(body('%PDF-1.7\n%âãÏÓ\n1 0 obj\n'), 'jsonl'))
    expect(pdf.status).toBe(422)
    expect(pdf.extra.detectedKind).toBe('a PDF document')
    // the ZIP signature "PK\x03\x04" (APPNOTE.TXT 4.3.7), as an .xlsx workbook begins
    const zip = await refusal(receive(body(Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00])), 'csv'))
    expect(zip.status).toBe(422)
    expect(zip.message).toMatch(/ZIP archive/)
  })

  it('refuses a file beyond the size limit with 413, whatever it holds', async () => {
    const e = await refusal(receive(body('{"a":1}\n', '{"b":2}\n'), 'jsonl', 10))
    expect(e.status).toBe(413)
    expect(e.extra.maxBytes).toBe(10)
  })

  it('refuses a file of blank lines, and a CSV with only its header', async () => {
    expect((await refusal(receive(body('\n \n'), 'jsonl'))).message).toMatch(/no runs/)
    const header = 'id,serial,partNumber,lot,startedAt,finishedAt,name,value,unit\n'
    expect((await refusal(receive(body(header), 'csv'))).message).toMatch(/no runs/)
  })
})
