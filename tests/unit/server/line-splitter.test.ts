import { describe, expect, it } from 'vitest'
import { isBlankLine, isUtf8Line, LineSplitter } from '../../../server/utils/line-splitter'

function split(chunks: (string | Buffer)[], max = 1024) {
  const s = new LineSplitter(max)
  const out = []
  for (const c of chunks) out.push(...s.push(Buffer.isBuffer(c) ? c : Buffer.from(c, 'utf8')))
  out.push(...s.end())
  return { lines: out.map((l) => ({ n: l.number, text: l.bytes.toString('utf8'), tooLong: l.tooLong })), count: s.lines }
}

describe('LineSplitter', () => {
  it('numbers lines across chunk borders and drops CR before LF', () => {
    const r = split(['one\r\ntw', 'o\nthr', 'ee\r', '\n'])
    expect(r.lines).toEqual([
      { n: 1, text: 'one', tooLong: false },
      { n: 2, text: 'two', tooLong: false },
      { n: 3, text: 'three', tooLong: false },
    ])
    expect(r.count).toBe(3)
  })

  it('hands out a last line without a line break, and counts blank lines', () => {
    const r = split(['a\n\nb'])
    expect(r.lines.map((l) => l.text)).toEqual(['a', '', 'b'])
    expect(r.count).toBe(3)
  })

  it('gives nothing for empty input', () => {
    expect(split([]).lines).toEqual([])
    expect(split(['']).count).toBe(0)
  })

  it('drops a UTF-8 byte-order mark at the start only, also when it is split over chunks', () => {
    const bom = Buffer.from([0xef, 0xbb, 0xbf])
    expect(split([Buffer.concat([bom, Buffer.from('id\n')])]).lines[0]!.text).toBe('id')
    expect(split([bom.subarray(0, 1), Buffer.concat([bom.subarray(1), Buffer.from('x\n')])]).lines[0]!.text).toBe('x')
    const second = split(['a\n', Buffer.concat([bom, Buffer.from('b')])]).lines[1]!
    expect(second.text).toBe('\ufeffb')
  })

  it('keeps a multi-byte character split across chunks intact', () => {
    const bytes = Buffer.from('Ω-ü\n', 'utf8')
    const r = split([bytes.subarray(0, 1), bytes.subarray(1, 4), bytes.subarray(4)])
    expect(r.lines[0]!.text).toBe('Ω-ü')
  })

  it('flags a line longer than the limit without holding it, and carries on after it', () => {
    const r = split(['x'.repeat(30), 'y'.repeat(30), '\nshort\n'], 50)
    expect(r.lines).toEqual([
      { n: 1, text: '', tooLong: true },
      { n: 2, text: 'short', tooLong: false },
    ])
  })
})

describe('line checks', () => {
  it('tells UTF-8 from other encodings', () => {
    expect(isUtf8Line(Buffer.from('Müller 5 Ω', 'utf8'))).toBe(true)
    expect(isUtf8Line(Buffer.from('Müller', 'latin1'))).toBe(false)
    expect(isUtf8Line(Buffer.from([0xff, 0xfe, 0x41, 0x00]))).toBe(false)
  })

  it('treats spaces, tabs and a stray CR as blank', () => {
    expect(isBlankLine(Buffer.from(' \t\r'))).toBe(true)
    expect(isBlankLine(Buffer.from(''))).toBe(true)
    expect(isBlankLine(Buffer.from(' {}'))).toBe(false)
  })
})
