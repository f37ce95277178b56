// An import's upload, kept in the database as numbered slices so that any app instance can read it back in order.
import type { Knex } from 'knex'

type PreparingConnection = { execute(sql: string, values: unknown[], done: (err: Error | null) => void): void }

/**
 * Sent as a prepared statement, so the slice travels as bytes: the query builder would write it out as a hex literal
 * twice its size (and again as the packet), garbage that made the server's memory swell during a large upload.
 */
export async function insertUploadChunk(db: Knex, importId: string, seq: number, bytes: Buffer): Promise<void> {
  const conn = (await db.client.acquireConnection()) as PreparingConnection
  try {
    await new Promise<void>((done, fail) => {
      conn.execute('INSERT INTO import_upload_chunks (import_id, seq, bytes) VALUES (?, ?, ?)', [importId, seq, bytes], (err) => (err ? fail(err) : done()))
    })
  } finally {
    await db.client.releaseConnection(conn)
  }
}

/** One slice of the upload, or undefined past its end. */
export async function readUploadChunk(db: Knex, importId: string, seq: number): Promise<Buffer | undefined> {
  const r = await db('import_upload_chunks').where({ import_id: importId, seq }).first('bytes')
  return r ? Buffer.from(r.bytes) : undefined
}

export async function deleteUploadChunks(db: Knex, importId: string): Promise<number> {
  return db('import_upload_chunks').where({ import_id: importId }).del()
}

export async function countUploadChunks(db: Knex, importId: string): Promise<number> {
  const r = await db('import_upload_chunks').where({ import_id: importId }).count({ n: '*' }).first()
  return Number(r?.n ?? 0)
}

/** The whole file is stored: the job shows up and may be carried on by any instance. */
export async function markUploadReceived(db: Knex, importId: string, u: { bytes: number; sha256: string; chunks: number; lines: number }): Promise<void> {
  await db('import_jobs').where({ id: importId })
    .update({ upload_bytes: u.bytes, upload_sha256: u.sha256, upload_chunks: u.chunks, lines_total: u.lines, received_at: db.fn.now(3), updated_at: db.fn.now(3) })
}

export type StoredUpload = { bytes: number; sha256: string; chunks: number }

export async function findStoredUpload(db: Knex, importId: string): Promise<StoredUpload | undefined> {
  const r = await db('import_jobs').where({ id: importId }).whereNotNull('upload_sha256').first('upload_bytes', 'upload_sha256', 'upload_chunks')
  return r ? { bytes: Number(r.upload_bytes), sha256: r.upload_sha256, chunks: Number(r.upload_chunks) } : undefined
}

/** The job_leases row naming an import (the table's names are at most 40 characters). */
export function importLeaseName(importId: string): string {
  return `import:${importId.replace(/-/g, '')}`
}

const LEASE_JOIN = "l.name = CONCAT('import:', REPLACE(j.id, '-', ''))"

/** Running imports with a stored upload whose lease is free or ran out: their worker is gone. */
export async function importsToResume(db: Knex, limit: number, now = new Date()): Promise<string[]> {
  const [rows] = await db.raw(
    `SELECT j.id FROM import_jobs j LEFT JOIN job_leases l ON ${LEASE_JOIN}
     WHERE j.status = 'running' AND j.received_at IS NOT NULL AND j.upload_sha256 IS NOT NULL
       AND (l.name IS NULL OR l.owner IS NULL OR l.lease_until IS NULL OR l.lease_until <= ?)
     ORDER BY j.started_at LIMIT ${Number(limit)}`, [now])
  return (rows as { id: string }[]).map((r) => r.id)
}

/** Uploads whose receiving instance went away before the file arrived whole (lease run out, or never taken). */
export async function abandonedUploads(db: Knex, olderThan: Date, now = new Date()): Promise<string[]> {
  const [rows] = await db.raw(
    `SELECT j.id FROM import_jobs j LEFT JOIN job_leases l ON ${LEASE_JOIN}
     WHERE j.received_at IS NULL AND j.started_at < ?
       AND (l.name IS NULL OR l.owner IS NULL OR l.lease_until IS NULL OR l.lease_until <= ?)
     LIMIT 20`, [olderThan, now])
  return (rows as { id: string }[]).map((r) => r.id)
}

/** Removes an upload that never arrived whole, with its slices (cascade); only while it is still not received. */
export async function deleteUnreceivedImport(db: Knex, importId: string): Promise<boolean> {
  return (await db('import_jobs').where({ id: importId }).whereNull('received_at').del()) > 0
}

export async function countResume(db: Knex, importId: string): Promise<void> {
  await db('import_jobs').where({ id: importId }).update({ resumes: db.raw('resumes + 1'), updated_at: db.fn.now(3) })
}
