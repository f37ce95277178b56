// Checks of uploaded files by their content (never by their name or declared type), shared by the server's upload
// routes and the pages that read a file before sending it.

// Signatures of file kinds people pick by mistake instead of a text export (each format's published magic number).
const SIGNATURES: { name: string; bytes: number[] }[] = [
  { name: 'a PDF document', bytes: [0x25, 0x50, 0x44, 0x46, 0x2d] },
  { name: 'a ZIP archive (or an Excel .xlsx workbook)', bytes: [0x50, 0x4b, 0x03, 0x04] },
  { name: 'a gzip archive', bytes: [0x1f, 0x8b] },
  { name: 'an old Excel or Word file (OLE)', bytes: [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1] },
  { name: 'a PNG image', bytes: [0x89, 0x50, 0x4e, 0x47] },
  { name: 'a JPEG image', bytes: [0xff, 0xd8, 0xff] },
  { name: 'an SQLite database', bytes: [0x53, 0x51, 0x4c, 0x69, 0x74, 0x65, 0x20, 0x66, 0x6f, 0x72, 0x6d, 0x61, 0x74, 0x20, 0x33, 0x00] },
]

/** What a file's first bytes say it is, when that is a known kind other than text. */
export function binaryKind(head: Uint8Array): string | undefined {
  return SIGNATURES.find((s) => head.length >= s.bytes.length && s.bytes.every((b, i) => head[i] === b))?.name
}

/** The first bytes of a text already decoded (a list read in the browser), for binaryKind. */
export function headBytes(text: string): Uint8Array {
  return new TextEncoder().encode(text.slice(0, 16))
}

// NUL and the C0 controls other than tab, LF and CR never occur in a text export; U+FFFD is what a browser puts for
// bytes that are not UTF-8, so a binary file read as text is full of them
// eslint-disable-next-line no-control-regex -- control characters are exactly what is looked for
const NOT_TEXT = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffd]/

/** Why a decoded line is not plain text, or null when it is. */
export function notTextReason(line: string): string | null {
  const m = NOT_TEXT.exec(line)
  if (!m) return null
  return m[0] === '\ufffd' ? 'holds bytes that are not UTF-8 text' : m[0] === '\u0000' ? 'holds a NUL byte' : 'holds a control character'
}

// eslint-disable-next-line no-control-regex -- control characters are exactly what a shown name must lose
const UNSHOWABLE = /[\u0000-\u001f\u007f-\u009f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g

/**
 * A client's file name as data, fit to show: its last path segment only (whatever the separator), without control
 * or direction-override characters, spaces collapsed, at most `max` characters. It never names a place on a disk.
 */
export function displayFileName(raw: unknown, fallback: string, max = 200): string {
  if (typeof raw !== 'string') return fallback
  const last = raw.split(/[\\/]/).pop() ?? ''
  const clean = last.replace(UNSHOWABLE, '').replace(/\s+/g, ' ').trim()
  if (!clean || clean === '.' || clean === '..') return fallback
  return [...clean].slice(0, max).join('')
}
