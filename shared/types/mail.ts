// What the admin Outbox page reads: the queue of outgoing e-mail and what the local mail catcher received.

export type OutboxStatus = 'queued' | 'sending' | 'sent' | 'failed'

export type OutboxEntry = {
  id: number; messageId: string; template: string; to: string[]; subject: string; status: OutboxStatus; attempts: number
  lastError: string | null; nextTryAt: string; createdAt: string; sentAt: string | null
}

export type OutboxView = {
  /** where mail goes: null when no SMTP relay is configured (messages wait in the queue) */
  relay: { host: string; port: number; localCatcher: boolean } | null
  counts: Partial<Record<OutboxStatus, number>>
  messages: OutboxEntry[]
}

export type ReceivedMail = { file: string; messageId: string | null; from: string | null; to: string[]; subject: string; text: string; html: string; links: string[]; receivedAt: string }

export type ReceivedView = { inUse: boolean; messages: ReceivedMail[] }
