// SMTP settings from the environment, read once per call so tests can pass their own.

export type SmtpSettings = { host: string; port: number; secure: boolean; user?: string; password?: string; from: string }

export const DEFAULT_FROM = 'Tercet <tercet@localhost>'

export function smtpSettings(env: NodeJS.ProcessEnv = process.env): SmtpSettings | null {
  if (!env.TERCET_SMTP_HOST) return null
  const secure = /^(1|true|yes)$/i.test(env.TERCET_SMTP_SECURE || '')
  return {
    host: env.TERCET_SMTP_HOST, port: Number(env.TERCET_SMTP_PORT || (secure ? 465 : 587)), secure,
    user: env.TERCET_SMTP_USER || undefined, password: env.TERCET_SMTP_PASSWORD || undefined, from: env.TERCET_MAIL_FROM || DEFAULT_FROM,
  }
}

/** The folder the local mail catcher writes to, when the scripts started it for this server. */
export function mailFakeDir(env: NodeJS.ProcessEnv = process.env): string | null {
  return env.TERCET_MAIL_FAKE_DIR || null
}
