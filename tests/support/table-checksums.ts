// Row counts and checksums of every table of the test database, to show that refused requests left nothing behind.
import type { Knex } from 'knex'

/**
 * Tables the server's own timers write whatever the requests do. They are compared by their row count and highest
 * id (no row added or removed) rather than by checksum, since the writes in question update rows in place:
 * - job_leases: the alert evaluator renews its lease row on every pass (every 2 s);
 * - mail_outbox: the mail sender marks queued messages sending, sent or failed, with attempts and backoff that can
 *   run for minutes after the test that queued them.
 */
const UPDATED_IN_PLACE = new Set(['job_leases', 'mail_outbox'])

/**
 * Columns that record that a caller was seen rather than what it sent, left out of their table's checksum:
 * - station_tokens.last_used_at: moved (at most once a minute) whenever a station's token authenticates a request.
 */
const SEEN_COLUMNS: Record<string, string[]> = { station_tokens: ['last_used_at'] }

export type TableState = Map<string, string>

/** What a caller expects to change and leaves out: whole tables, or the rows of a table matching a condition. */
export type Allowance = { tables?: string[]; rowsOf?: Record<string, string> }

async function columnsOf(db: Knex, table: string): Promise<string[]> {
  const [cols] = await db.raw('SELECT column_name AS c FROM information_schema.columns WHERE table_schema = DATABASE() AND table_name = ? ORDER BY ordinal_position', [table]) as [{ c: string }[]]
  return cols.map((c) => c.c)
}

/** Count and an order-free hash of the chosen columns of the rows matching `where`. */
async function rowHash(db: Knex, table: string, columns: string[], where = '1 = 1'): Promise<string> {
  const cols = columns.map((c) => `IFNULL(\`${c}\`, 0x00)`).join(', ')
  const [[row]] = await db.raw(`SELECT COUNT(*) AS n, BIT_XOR(CRC32(CONCAT_WS(0x1f, ${cols}))) AS h FROM \`${table}\` WHERE ${where}`) as [{ n: number; h: string | number }[]]
  return `rows ${Number(row!.n)} hash ${row!.h}`
}

export async function tableStates(db: Knex, allow: Allowance = {}): Promise<TableState> {
  const [tables] = await db.raw(
    "SELECT table_name AS name FROM information_schema.tables WHERE table_schema = DATABASE() AND table_type = 'BASE TABLE' ORDER BY table_name",
  ) as [{ name: string }[]]
  const names = tables.map((t) => t.name).filter((n) => !allow.tables?.includes(n))
  const special = (n: string) => UPDATED_IN_PLACE.has(n) || !!SEEN_COLUMNS[n] || !!allow.rowsOf?.[n]
  const out: TableState = new Map()
  const summed = names.filter((n) => !special(n))
  const [sums] = await db.raw(`CHECKSUM TABLE ${summed.map((n) => `\`${n}\``).join(', ')}`) as [{ Table: string; Checksum: string | number | null }[]]
  const counts = await Promise.all(summed.map(async (name) => {
    const [[row]] = await db.raw(`SELECT COUNT(*) AS n FROM \`${name}\``) as [{ n: number }[]]
    return [name, Number(row!.n)] as const
  }))
  const countOf = new Map(counts)
  for (const s of sums) {
    const name = s.Table.split('.').pop()!
    out.set(name, `rows ${countOf.get(name)} checksum ${s.Checksum}`)
  }
  for (const name of names.filter(special)) {
    if (UPDATED_IN_PLACE.has(name)) {
      const hasId = (await columnsOf(db, name)).includes('id')
      const [[row]] = await db.raw(`SELECT COUNT(*) AS n, ${hasId ? 'MAX(id)' : 'NULL'} AS top FROM \`${name}\``) as [{ n: number; top: number | null }[]]
      out.set(name, `rows ${Number(row!.n)} top id ${row!.top}`)
    } else {
      const skip = SEEN_COLUMNS[name] ?? []
      const where = allow.rowsOf?.[name]
      out.set(name, `${await rowHash(db, name, (await columnsOf(db, name)).filter((c) => !skip.includes(c)), where)}${where ? ` where ${where}` : ''}`)
    }
  }
  return out
}

/** Tables whose state differs, with both states. */
export function changedTables(before: TableState, after: TableState): string[] {
  const names = new Set([...before.keys(), ...after.keys()])
  return [...names].filter((n) => before.get(n) !== after.get(n)).map((n) => `${n}: ${before.get(n)} → ${after.get(n)}`)
}

/**
 * Waits until two readings 2 s apart agree, so the background fold and alert passes of earlier tests have settled
 * before the reading the test compares against.
 */
export async function settledTableStates(db: Knex, allow: Allowance = {}, timeoutMs = 60_000): Promise<TableState> {
  const deadline = Date.now() + timeoutMs
  let prev = await tableStates(db, allow)
  for (;;) {
    await new Promise((r) => setTimeout(r, 2000))
    const next = await tableStates(db, allow)
    if (changedTables(prev, next).length === 0 || Date.now() > deadline) return next
    prev = next
  }
}
