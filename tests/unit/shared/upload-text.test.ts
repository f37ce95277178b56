import { describe, expect, it } from 'vitest'
import { binaryKind, displayFileName, headBytes, notTextReason } from '../../../shared/utils/upload-text'

describe('binaryKind', () => {
  // magic numbers as each format publishes them: PDF "%PDF-" (ISO 32000-1 7.5.2), ZIP "PK\x03\x04" (APPNOTE 4.3.7),
  // gzip 1f 8b (RFC 1952 2.3.1), PNG 89 50 4E 47 (RFC 2083 3.1)
  it('names the kinds of file picked by mistake', () => {
    expect(binaryKind(headBytes('%PDF-1.4\n'))).toBe('a PDF document')
    expect(binaryKind(Uint8Array.from([0x50, 0x4b, 0x03, 0x04, 0]))).toMatch(/ZIP/)
    expect(binaryKind(Uint8Array.from([0x1f, 0x8b, 8, 0]))).toBe('a gzip archive')
    expect(binaryKind(Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]))).toBe('a PNG image')
  })

  it('says nothing of text', () => {
    expect(binaryKind(headBytes('{"id":"r-1"}'))).toBeUndefined()
    expect(binaryKind(headBytes('serial\nSN-1'))).toBeUndefined()
    expect(binaryKind(new Uint8Array())).toBeUndefined()
  })
})

describe('notTextReason', () => {
  it('accepts text with tabs and accents, refuses NUL, controls and undecodable bytes', () => {
    expect(notTextReason('T3-1000\tSN-Jürgen-01\r')).toBeNull()
    expect(notTextReason('SN\u00001')).toMatch(/NUL/)
    expect(notTextReason('SN\u001b[2J')).toMatch(/control/)
    expect(notTextReason('SN\ufffd\ufffd')).toMatch(/not UTF-8/)
  })
})

describe('displayFileName', () => {
  it('keeps only the last path segment, whatever the separator', () => {
    expect(displayFileName('../../etc/passwd', 'x')).toBe('passwd')
    expect(displayFileName('C:\\Users\\ada\\runs.jsonl', 'x')).toBe('runs.jsonl')
    expect(displayFileName('/tmp/', 'upload.csv')).toBe('upload.csv')
    expect(displayFileName('..', 'upload.csv')).toBe('upload.csv')
  })

  it('drops control and direction-override characters and limits the length', () => {
    expect(displayFileName('runs\u0000\n.csv', 'x')).toBe('runs.csv')
    // U+202E would show "runs_fdp.csv" reversed as "runs_vsc.pdf"
    expect(displayFileName('runs_\u202efdp.csv', 'x')).toBe('runs_fdp.csv')
    expect(displayFileName('a'.repeat(300), 'x')).toHaveLength(200)
    expect(displayFileName(42, 'upload.jsonl')).toBe('upload.jsonl')
  })
})
