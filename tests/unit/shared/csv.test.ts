import { describe, expect, it } from 'vitest'
import { csvEscapeCell, csvUnescapeCell, parseCsvRecords, toCsvDocument } from '../../../shared/utils/csv'

describe('csvEscapeCell', () => {
  it('prefixes formula-looking text with an apostrophe', () => {
    expect(csvEscapeCell('=SUM(A1:A9)')).toBe("'=SUM(A1:A9)")
    expect(csvEscapeCell('+1')).toBe("'+1")
    expect(csvEscapeCell(-3)).toBe("'-3")
    expect(csvEscapeCell('@cmd')).toBe("'@cmd")
    expect(csvEscapeCell('\tx')).toBe("'\tx")
    expect(csvEscapeCell('plain')).toBe('plain')
    expect(csvEscapeCell(2.5)).toBe('2.5')
    expect(csvEscapeCell(null)).toBe('')
  })

  it('quotes cells holding commas, quotes or line breaks', () => {
    expect(csvEscapeCell('a,b')).toBe('"a,b"')
    expect(csvEscapeCell('say "hi"')).toBe('"say ""hi"""')
    expect(csvEscapeCell('=1,2')).toBe('"\'=1,2"')
  })

  it('every value survives escape, parse and un-escape, apostrophes included', () => {
    const values = ['=1+1', "'=1", "'quoted", "it's", '-', '@', 'a\r\nb', ' padded ', '"', '+']
    const doc = toCsvDocument(['v'], values.map((v) => [v]))
    const back = parseCsvRecords(doc).slice(1).map((r) => csvUnescapeCell(r[0]!))
    expect(back).toEqual(values)
  })
})

describe('parseCsvRecords', () => {
  it('reads quoted cells with separators and line breaks, CRLF or LF, and skips blank lines and a BOM', () => {
    expect(parseCsvRecords('\ufeffa,b\r\n"x,1","y\n2"\n\nc,\n')).toEqual([['a', 'b'], ['x,1', 'y\n2'], ['c', '']])
  })

  it('reports an unclosed quote with its record number', () => {
    expect(() => parseCsvRecords('a\n"b\n')).toThrow(/not closed/)
  })
})
