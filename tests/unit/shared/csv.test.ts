import { describe, expect, it } from 'vitest'
import { csvEscapeCell, csvHeaderWithUnit, csvUnescapeCell, parseCsvRecords, toCsvDocument } from '../../../shared/utils/csv'

// Formula characters after the OWASP "CSV Injection" guidance: = + - @ tab and carriage return start a formula in a
// spreadsheet when a text cell begins with them.
describe('csvEscapeCell', () => {
  it('neutralises text that starts with = + - @ tab or CR with a leading apostrophe', () => {
    expect(csvEscapeCell('=SUM(A1:A9)')).toBe("'=SUM(A1:A9)")
    expect(csvEscapeCell('+1')).toBe("'+1")
    expect(csvEscapeCell('-136.9')).toBe("'-136.9")
    expect(csvEscapeCell('-2+3')).toBe("'-2+3")
    expect(csvEscapeCell('@cmd')).toBe("'@cmd")
    expect(csvEscapeCell('\tx')).toBe("'\tx")
    expect(csvEscapeCell('\rx')).toBe(`"'\rx"`)
    expect(csvEscapeCell('plain')).toBe('plain')
    expect(csvEscapeCell(null)).toBe('')
  })

  it('writes numbers as numbers: full precision, ASCII minus, never an apostrophe', () => {
    expect(csvEscapeCell(-136.9)).toBe('-136.9')
    expect(csvEscapeCell(-3)).toBe('-3')
    expect(csvEscapeCell(2.5)).toBe('2.5')
    expect(csvEscapeCell(0.1 + 0.2)).toBe('0.30000000000000004')
    expect(csvEscapeCell(-1.2345678901234567e-14)).toBe('-1.2345678901234567e-14')
    expect(csvEscapeCell(Number.NaN)).toBe('')
    expect(csvEscapeCell(-Infinity)).toBe('')
    expect(csvEscapeCell(-136.9).charCodeAt(0)).toBe(0x2d)
  })

  it('a negative number comes back as the same number; formula-looking text comes back as the same text', () => {
    const numbers = [-136.9, -0.4, -1e-15, -149.5, 7, -1.2345678901234567e-14]
    const text = ['=1+1', '+49 30', '-x', '@SUM(A1)', '\tlead', '\rlead']
    const doc = toCsvDocument(['n', 't'], numbers.map((n, i) => [n, text[i]]))
    const rows = parseCsvRecords(doc).slice(1)
    // a spreadsheet or a CSV reader sees a plain decimal: Number() of the raw cell gives the value back exactly
    expect(rows.map((r) => Number(r[0]))).toEqual(numbers)
    expect(rows.map((r) => r[0]!.startsWith("'"))).toEqual(numbers.map(() => false))
    // every text cell starts with the apostrophe that stops a spreadsheet from evaluating it
    expect(rows.map((r) => r[1]![0])).toEqual(text.map(() => "'"))
    expect(rows.map((r) => csvUnescapeCell(r[1]!))).toEqual(text)
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

describe('csvHeaderWithUnit', () => {
  it('puts the unit in brackets after the name, and leaves a name without a unit alone', () => {
    expect(csvHeaderWithUnit('p10', 'dBc/Hz')).toBe('p10 [dBc/Hz]')
    expect(csvHeaderWithUnit('offset', 'Hz')).toBe('offset [Hz]')
    expect(csvHeaderWithUnit('n', null)).toBe('n')
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
