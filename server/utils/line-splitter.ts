import { isUtf8 } from 'node:buffer'

/** One physical line of an uploaded file, numbered from 1, without its line break. */
export type RawLine = { number: number; bytes: Buffer; tooLong: boolean }

const BOM = Buffer.from([0xef, 0xbb, 0xbf])

/**
 * Cuts a byte stream into lines at LF (a CR before it is dropped). A line beyond maxLineBytes keeps only
 * its number and the tooLong flag, so a file without line breaks cannot make the reader hold it whole.
 * A UTF-8 byte-order mark at the very start is dropped.
 */
export class LineSplitter {
  private parts: Buffer[] = []
  private size = 0
  private overflow = false
  private count = 0

  constructor(private maxLineBytes: number) {}

  /** Lines handed out so far. */
  get lines(): number {
    return this.count
  }

  push(chunk: Buffer): RawLine[] {
    const out: RawLine[] = []
    let start = 0
    for (;;) {
      const nl = chunk.indexOf(0x0a, start)
      if (nl < 0) break
      this.append(chunk.subarray(start, nl))
      out.push(this.take())
      start = nl + 1
    }
    if (start < chunk.length) this.append(chunk.subarray(start))
    return out
  }

  /** The last line when the input does not end with a line break. */
  end(): RawLine[] {
    return this.size > 0 || this.overflow ? [this.take()] : []
  }

  private append(part: Buffer): void {
    if (this.overflow || !part.length) return
    if (this.size + part.length > this.maxLineBytes) {
      this.overflow = true
      this.parts = []
      this.size = 0
      return
    }
    this.parts.push(part)
    this.size += part.length
  }

  private take(): RawLine {
    this.count += 1
    // copied, so that a line does not keep the whole chunk it came from alive
    let bytes = Buffer.concat(this.parts, this.size)
    if (this.count === 1 && bytes.subarray(0, 3).equals(BOM)) bytes = bytes.subarray(3)
    if (bytes.length && bytes[bytes.length - 1] === 0x0d) bytes = bytes.subarray(0, bytes.length - 1)
    const line = { number: this.count, bytes: this.overflow ? Buffer.alloc(0) : bytes, tooLong: this.overflow }
    this.parts = []
    this.size = 0
    this.overflow = false
    return line
  }
}

export function isUtf8Line(bytes: Buffer): boolean {
  return isUtf8(bytes)
}

export function isBlankLine(bytes: Buffer): boolean {
  for (const b of bytes) if (b !== 0x20 && b !== 0x09 && b !== 0x0d) return false
  return true
}
