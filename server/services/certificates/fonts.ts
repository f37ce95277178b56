// The typefaces embedded in every certificate: Inter for text, Roboto Mono for numbers, both from the shipped
// @fontsource packages (WOFF; fontkit subsets WOFF but not WOFF2). Never a system or a standard-14 font.
import { readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { inflateSync } from 'node:zlib'
import * as fontkit from 'fontkit'

export type CertificateFonts = { sans: Buffer; sansBold: Buffer; mono: Buffer; monoBold: Buffer }

export const FONT_FILES: Record<keyof CertificateFonts, { pkg: string; file: string }> = {
  sans: { pkg: '@fontsource/inter', file: 'inter-latin-400-normal.woff' },
  sansBold: { pkg: '@fontsource/inter', file: 'inter-latin-600-normal.woff' },
  mono: { pkg: '@fontsource/roboto-mono', file: 'roboto-mono-latin-400-normal.woff' },
  monoBold: { pkg: '@fontsource/roboto-mono', file: 'roboto-mono-latin-700-normal.woff' },
}

let fromPackages: CertificateFonts | undefined

/** The fonts read from node_modules: for scripts and tests (the built server reads them from its assets). */
export function fontsFromPackages(): CertificateFonts {
  if (fromPackages) return fromPackages
  const require = createRequire(import.meta.url)
  const read = (k: keyof CertificateFonts) => readFileSync(require.resolve(`${FONT_FILES[k].pkg}/files/${FONT_FILES[k].file}`))
  fromPackages = { sans: read('sans'), sansBold: read('sansBold'), mono: read('mono'), monoBold: read('monoBold') }
  return fromPackages
}

/**
 * A WOFF 1.0 file unpacked into the plain font it wraps (its tables inflated once). fontkit reads a WOFF's tables
 * by inflating them again at every access, which made subsetting cost hundreds of milliseconds per document.
 */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.readUInt32BE(0) !== 0x774f4646) return woff // not 'wOFF': already a plain font
  const flavor = woff.readUInt32BE(4)
  const numTables = woff.readUInt16BE(12)
  const tables = []
  for (let i = 0; i < numTables; i++) {
    const e = 44 + i * 20
    const tag = woff.readUInt32BE(e)
    const offset = woff.readUInt32BE(e + 4)
    const compLength = woff.readUInt32BE(e + 8)
    const origLength = woff.readUInt32BE(e + 12)
    const checksum = woff.readUInt32BE(e + 16)
    const raw = woff.subarray(offset, offset + compLength)
    const data = compLength < origLength ? inflateSync(raw) : raw
    if (data.length !== origLength) throw new Error('a WOFF table did not inflate to its stated length')
    tables.push({ tag, checksum, data })
  }
  let pow = 1
  while (pow * 2 <= numTables) pow *= 2
  const header = Buffer.alloc(12 + 16 * numTables)
  header.writeUInt32BE(flavor, 0)
  header.writeUInt16BE(numTables, 4)
  header.writeUInt16BE(pow * 16, 6)
  header.writeUInt16BE(Math.log2(pow), 8)
  header.writeUInt16BE(numTables * 16 - pow * 16, 10)
  const parts: Buffer[] = [header]
  let offset = header.length
  tables.forEach((t, i) => {
    const r = 12 + i * 16
    header.writeUInt32BE(t.tag, r)
    header.writeUInt32BE(t.checksum, r + 4)
    header.writeUInt32BE(offset, r + 8)
    header.writeUInt32BE(t.data.length, r + 12)
    const padded = Buffer.alloc((t.data.length + 3) & ~3)
    t.data.copy(padded)
    parts.push(padded)
    offset += padded.length
  })
  return Buffer.concat(parts)
}

// contextual alternates and ligatures cost most of a document's shaping time and add nothing to a record of numbers;
// kerning stays
const FEATURES = { calt: false, liga: false, clig: false, rlig: false, ccmp: false, locl: false, mark: false, mkmk: false, rclt: false }
const CACHED_RUNS = 20_000

type Position = Record<string, number>
type Run = { glyphs: unknown[]; positions: Position[] }

/**
 * Shaping by text, kept across documents: the same words (labels, units, dates) recur in every certificate. pdfkit
 * scales the positions it is given in place, so each call gets its own copies of them.
 */
function cachedLayout(layout: (text: unknown, features: unknown) => Run): (text: unknown, features?: unknown) => unknown {
  const runs = new Map<string, { glyphs: unknown[]; positions: Position[] }>()
  return (text) => {
    const key = String(text)
    let run = runs.get(key)
    if (!run) {
      const shaped = layout(key, FEATURES)
      run = { glyphs: shaped.glyphs, positions: shaped.positions.map((p) => ({ xAdvance: p.xAdvance!, yAdvance: p.yAdvance!, xOffset: p.xOffset!, yOffset: p.yOffset! })) }
      if (runs.size >= CACHED_RUNS) runs.clear()
      runs.set(key, run)
    }
    const positions = run.positions.map((p) => ({ ...p }))
    return {
      glyphs: run.glyphs, positions,
      get advanceWidth() { let w = 0; for (const p of positions) w += p.xAdvance!; return w },
    }
  }
}

export type ParsedFonts = Record<keyof CertificateFonts, ReturnType<typeof fontkit.create>>
const parsed = new WeakMap<CertificateFonts, ParsedFonts>()

/**
 * The fonts parsed once per process: parsing a WOFF costs far more than drawing a certificate. pdfkit takes a parsed
 * font as it takes a file, and makes its own subset of it for each document.
 */
export function parsedFonts(fonts: CertificateFonts): ParsedFonts {
  let p = parsed.get(fonts)
  if (!p) {
    const open = (b: Buffer) => {
      const font = fontkit.create(woffToSfnt(b))
      font.layout = cachedLayout(font.layout.bind(font))
      return font
    }
    p = { sans: open(fonts.sans), sansBold: open(fonts.sansBold), mono: open(fonts.mono), monoBold: open(fonts.monoBold) }
    parsed.set(fonts, p)
  }
  return p
}
