// Reads a ZIP archive's central directory and checks each stored entry, written from the format's own description
// (PKWARE APPNOTE.TXT 6.3: end of central directory record 0x06054b50, central file header 0x02014b50, local file
// header 0x04034b50), so the archive is checked by something other than the library that wrote it.

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1
  return c >>> 0
})

/** CRC-32 (ISO 3309, reflected polynomial 0xEDB88320); its published check value for "123456789" is 0xCBF43926. */
export function crc32(buf: Uint8Array): number {
  let c = 0xffffffff
  for (const b of buf) c = CRC_TABLE[(c ^ b) & 0xff]! ^ (c >>> 8)
  return (c ^ 0xffffffff) >>> 0
}

export type ZipEntry = { name: string; method: number; size: number; crcOk: boolean; data: Buffer }

export function zipEntries(zip: Buffer): ZipEntry[] {
  let eocd = -1
  for (let i = zip.length - 22; i >= Math.max(0, zip.length - 22 - 65_535); i--) {
    if (zip.readUInt32LE(i) === 0x06054b50) { eocd = i; break }
  }
  if (eocd < 0) throw new Error('no end of central directory record')
  const count = zip.readUInt16LE(eocd + 10)
  let p = zip.readUInt32LE(eocd + 16)
  const out: ZipEntry[] = []
  for (let i = 0; i < count; i++) {
    if (zip.readUInt32LE(p) !== 0x02014b50) throw new Error(`central header ${i} missing`)
    const method = zip.readUInt16LE(p + 10)
    const crc = zip.readUInt32LE(p + 16)
    const compressed = zip.readUInt32LE(p + 20)
    const size = zip.readUInt32LE(p + 24)
    const nameLen = zip.readUInt16LE(p + 28)
    const extraLen = zip.readUInt16LE(p + 30)
    const commentLen = zip.readUInt16LE(p + 32)
    const local = zip.readUInt32LE(p + 42)
    const name = zip.subarray(p + 46, p + 46 + nameLen).toString('utf8')
    if (zip.readUInt32LE(local) !== 0x04034b50) throw new Error(`local header of ${name} missing`)
    const start = local + 30 + zip.readUInt16LE(local + 26) + zip.readUInt16LE(local + 28)
    const data = zip.subarray(start, start + compressed)
    out.push({ name, method, size, data, crcOk: method === 0 && crc32(data) === crc })
    p += 46 + nameLen + extraLen + commentLen
  }
  return out
}
