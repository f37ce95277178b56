import { readdir, readFile } from 'node:fs/promises'
import { join } from 'node:path'
import type { Knex } from 'knex'
import type { OutboxView, ReceivedMail, ReceivedView } from '../../../shared/types/mail'
import { countOutbox, listOutbox } from '../../database/repositories/mail-outbox'
import { mailFakeDir, smtpSettings } from './settings'

export async function outboxView(db: Knex, limit = 200): Promise<OutboxView> {
  const s = smtpSettings()
  const [rows, counts] = await Promise.all([listOutbox(db, limit), countOutbox(db)])
  return {
    relay: s ? { host: s.host, port: s.port, localCatcher: !!mailFakeDir() } : null,
    counts,
    messages: rows.map((r) => ({
      ...r, status: r.status as OutboxView['messages'][number]['status'], nextTryAt: r.nextTryAt.toISOString(), createdAt: r.createdAt.toISOString(), sentAt: r.sentAt?.toISOString() ?? null,
    })),
  }
}

/** The newest messages the local catcher kept (its .json records), when the scripts started it for this server. */
export async function receivedView(limit = 100): Promise<ReceivedView> {
  const dir = mailFakeDir()
  if (!dir) return { inUse: false, messages: [] }
  const names = (await readdir(dir).catch(() => [] as string[])).filter((n) => n.endsWith('.json')).sort().reverse().slice(0, limit)
  const messages: ReceivedMail[] = []
  for (const n of names) {
    try { messages.push(JSON.parse(await readFile(join(dir, n), 'utf8'))) } catch { /* removed meanwhile */ }
  }
  return { inUse: true, messages }
}
